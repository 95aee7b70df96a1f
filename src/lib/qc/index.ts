export { computeObjectiveStatus } from "./objective-status";
export type { ObjectiveStatus, ObjectiveStatusInput, ObjectiveStatusResult } from "./objective-status";
export { measurementVerdict } from "./measurement-verdict";
export type { MeasurementVerdict, MeasurementVerdictInput, VerdictLevel } from "./measurement-verdict";
export { computeControlChart, theilSenSlope, D2_N2 } from "./control-chart";
export { baselineBand, type BaselineBand } from "./baseline-band";
export type {
  ControlChart,
  ControlChartOptions,
  ControlPoint,
  RuleHit,
  RuleId,
  TheilSenResult,
} from "./control-chart";
export { checkReminders } from "./check-reminders";
export type {
  CheckReminders,
  CheckRemindersOptions,
  ReminderItem,
  ReminderKind,
  ReminderObjective,
} from "./check-reminders";
