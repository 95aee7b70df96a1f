export * from "./enums";
export * from "./facilities";
export * from "./instruments";
export * from "./stacks";
export * from "./access";
