export { computeObjectiveStatus } from "./objective-status";
export type { ObjectiveStatus, ObjectiveStatusInput, ObjectiveStatusResult } from "./objective-status";
export { measurementVerdict } from "./measurement-verdict";
export type { MeasurementVerdict, MeasurementVerdictInput, VerdictLevel } from "./measurement-verdict";
