import { pgEnum } from "drizzle-orm/pg-core";
import { logbookEventKinds } from "../../../contracts/logbook";

export const roleEnum = pgEnum("role", ["admin", "staff", "researcher", "engineer"]);
export const modalityEnum = pgEnum("modality", [
  "widefield",
  "confocal",
  "spinning-disk",
  "two-photon",
  "light-sheet",
]);
export const immersionEnum = pgEnum("immersion", ["air", "water", "glycerol", "silicone", "oil"]);
export const purposeEnum = pgEnum("measurement_purpose", [
  "routine",
  "baseline",
  "pre-service",
  "post-service",
  "sample",
]);
export const measurementStatusEnum = pgEnum("measurement_status", [
  "queued",
  "running",
  "done",
  "failed",
  "cancelled",
]);
export const logbookEventKindEnum = pgEnum("logbook_event_kind", logbookEventKinds);
