export { computeObjectiveStatus } from "./objective-status";
export type { ObjectiveStatus, ObjectiveStatusInput, ObjectiveStatusResult } from "./objective-status";
