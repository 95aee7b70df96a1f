/**
 * The OpenAPI 3.1 description of API v1, built from the same zod contracts the
 * route handlers validate with, so the document cannot drift from the code.
 */
import { z } from "zod";
import {
  createInstrumentSchema,
  createObjectiveSchema,
  patchObjectiveSchema,
} from "../../contracts/instruments";
import { createLogbookEventSchema } from "../../contracts/logbook";
import {
  BEAD_PAGE_MAX,
  MEASUREMENT_PAGE_MAX,
  createMeasurementSchema,
  measurementStatusSchema,
  purposeSchema,
  rerunMeasurementSchema,
} from "../../contracts/measurements";
import { plannerRequestSchema } from "../../contracts/planner";
import { createServiceVisitSchema, signOffSchema } from "../../contracts/service-visits";
import { stackUploadMetaSchema } from "../../contracts/stacks";
import { ERROR_STATUS } from "./errors";

const schema = (s: z.ZodType) => z.toJSONSchema(s, { io: "input", unrepresentable: "any" });

const errorBody = {
  type: "object",
  required: ["error"],
  properties: {
    error: {
      type: "object",
      required: ["code", "message"],
      properties: { code: { type: "string", enum: Object.keys(ERROR_STATUS) }, message: { type: "string" } },
    },
  },
};

const errors = (...codes: number[]) =>
  Object.fromEntries(
    codes.map((c) => [
      String(c),
      {
        description: "Error",
        content: { "application/json": { schema: { $ref: "#/components/schemas/Error" } } },
      },
    ]),
  );

const json = (s: z.ZodType) => ({ required: true, content: { "application/json": { schema: schema(s) } } });
const ok = (description: string) => ({
  description,
  content: { "application/json": { schema: { type: "object" } } },
});
const idParam = [{ name: "id", in: "path", required: true, schema: { type: "string", format: "uuid" } }];
const binary = (description: string, mediaType: string) => ({
  description,
  content: { [mediaType]: { schema: { type: "string", format: "binary" } } },
});

export function buildOpenApiDocument(serverUrl: string) {
  return {
    openapi: "3.1.0",
    info: {
      title: "Beadbench API",
      version: "1.0.0",
      description:
        "Bead z-stacks in, PSF widths against depth out. Authenticate with a personal token: `Authorization: Bearer <token>` (Settings → API tokens, or `npm run token:create`). Errors are `{ error: { code, message } }`.",
    },
    servers: [{ url: serverUrl }],
    security: [{ bearer: [] }],
    components: {
      securitySchemes: { bearer: { type: "http", scheme: "bearer" } },
      schemas: { Error: errorBody },
    },
    paths: {
      "/api/v1/stacks": {
        get: {
          summary: "List the facility's stacks",
          responses: { "200": ok("Stacks"), ...errors(401, 403) },
        },
        post: {
          summary: "Upload a TIFF z-stack in one request",
          requestBody: {
            required: true,
            content: {
              "multipart/form-data": {
                schema: {
                  type: "object",
                  required: ["file"],
                  properties: {
                    file: { type: "string", format: "binary" },
                    meta: { ...schema(stackUploadMetaSchema), description: "JSON text" },
                  },
                },
              },
            },
          },
          responses: {
            "201": ok("Stored"),
            "200": ok("The same bytes were uploaded before: the stored stack is reused"),
            ...errors(400, 401, 403, 413, 415, 422),
          },
        },
      },
      "/api/v1/stacks/{id}": {
        get: {
          summary: "One stack with its file metadata",
          parameters: idParam,
          responses: { "200": ok("Stack"), ...errors(401, 404) },
        },
        delete: {
          summary: "Delete an unused stack",
          parameters: idParam,
          responses: { "204": { description: "Deleted" }, ...errors(401, 403, 404, 409) },
        },
      },
      "/api/v1/stacks/{id}/thumbnail": {
        get: {
          summary: "Maximum-intensity projection of one channel as a grey PNG",
          parameters: [
            ...idParam,
            { name: "channel", in: "query", schema: { type: "integer", minimum: 0, default: 0 } },
            {
              name: "size",
              in: "query",
              schema: { type: "integer", default: 256 },
              description: "Longest side, px",
            },
          ],
          responses: { "200": binary("PNG image", "image/png"), ...errors(400, 401, 404, 422) },
        },
      },
      "/api/v1/uploads": {
        post: {
          summary:
            "Resumable upload (tus 1.0.0 protocol): create an upload; the finishing PATCH returns the stack",
          responses: { "201": { description: "Upload created" }, ...errors(401, 413) },
        },
        options: {
          summary: "tus 1.0.0 capability discovery (Tus-Version, Tus-Extension, Tus-Max-Size)",
          responses: { "204": { description: "Capabilities in the headers" } },
        },
      },
      "/api/v1/uploads/{id}": {
        head: {
          summary: "tus: the offset reached by an upload (Upload-Offset header), to resume it",
          parameters: [{ name: "id", in: "path", required: true, schema: { type: "string" } }],
          responses: {
            "200": { description: "Upload-Offset and Upload-Length headers" },
            ...errors(401, 404),
          },
        },
        patch: {
          summary: "tus: append a chunk (application/offset+octet-stream); the last one registers the stack",
          parameters: [{ name: "id", in: "path", required: true, schema: { type: "string" } }],
          responses: {
            "204": { description: "Chunk stored" },
            "200": ok("Upload finished: the registered stack"),
            ...errors(401, 404, 409, 413, 415, 422),
          },
        },
        get: {
          summary: "tus: read back the bytes received so far",
          parameters: [{ name: "id", in: "path", required: true, schema: { type: "string" } }],
          responses: { "200": binary("The uploaded bytes", "application/octet-stream"), ...errors(401, 404) },
        },
        delete: {
          summary: "tus termination: abandon an upload",
          parameters: [{ name: "id", in: "path", required: true, schema: { type: "string" } }],
          responses: { "204": { description: "Deleted" }, ...errors(401, 404) },
        },
        options: {
          summary: "tus 1.0.0 capability discovery",
          parameters: [{ name: "id", in: "path", required: true, schema: { type: "string" } }],
          responses: { "204": { description: "Capabilities in the headers" } },
        },
      },
      "/api/v1/measurements": {
        get: {
          summary:
            "The measurements you may see, newest first (acquired, then created), in pages: { measurements, next }; pass next as `before` for the following page (null on the last). Each row has ids, names, purpose, status, times, version, and for finished ones the headline measured/theory ratios and the verdict level. Researchers see other people's sample measurements nowhere; engineers only their current visit's instruments",
          parameters: [
            { name: "objectiveId", in: "query", schema: { type: "string", format: "uuid" } },
            { name: "purpose", in: "query", schema: { type: "string", enum: purposeSchema.options } },
            {
              name: "status",
              in: "query",
              schema: { type: "string", enum: measurementStatusSchema.options },
            },
            {
              name: "limit",
              in: "query",
              description: "Measurements per page",
              schema: { type: "integer", minimum: 1, maximum: MEASUREMENT_PAGE_MAX, default: 50 },
            },
            {
              name: "before",
              in: "query",
              description: "The previous page's `next`, unchanged (an opaque cursor); anything else is a 400",
              schema: { type: "string" },
            },
          ],
          responses: { "200": ok("{ measurements, next }"), ...errors(400, 401) },
        },
        post: {
          summary: "Start a measurement",
          requestBody: json(createMeasurementSchema),
          responses: { "202": ok("{ id, status }"), ...errors(400, 401, 403, 404, 415, 422) },
        },
      },
      "/api/v1/measurements/{id}": {
        get: {
          summary: "Status, progress and, when done, the summary",
          parameters: idParam,
          responses: { "200": ok("Measurement"), ...errors(401, 404) },
        },
      },
      "/api/v1/measurements/{id}/beads": {
        get: {
          summary:
            "One row per bead. JSON comes in pages by bead id: { beads, next }, pass next as `after` for the following page (null on the last); CSV is always every bead",
          parameters: [
            ...idParam,
            { name: "format", in: "query", schema: { type: "string", enum: ["json", "csv"] } },
            {
              name: "limit",
              in: "query",
              description: "JSON only: beads per page",
              schema: { type: "integer", minimum: 1, maximum: BEAD_PAGE_MAX, default: 1000 },
            },
            {
              name: "after",
              in: "query",
              description:
                "JSON only: return beads whose id is greater than this (the previous page's `next`)",
              schema: { type: "integer", minimum: 0 },
            },
          ],
          responses: { "200": ok("Beads"), ...errors(400, 401, 404) },
        },
      },
      "/api/v1/measurements/{id}/beads/{bead}": {
        get: {
          summary: "The voxels around one bead (orthogonal sections for the bead viewer)",
          parameters: [
            ...idParam,
            { name: "bead", in: "path", required: true, schema: { type: "integer", minimum: 0 } },
          ],
          responses: { "200": ok("Bead sections"), ...errors(400, 401, 404, 409) },
        },
      },
      "/api/v1/measurements/{id}/summary": {
        get: {
          summary:
            "Summary record of a finished measurement (schema beadbench.summary/1; OpticalCalibration fields named after the 4DN-BINA-OME calibration extension; widths in µm)",
          parameters: idParam,
          responses: { "200": ok("Summary record"), ...errors(400, 401, 404, 409) },
        },
      },
      "/api/v1/measurements/{id}/averaged-psf.ome.tif": {
        get: {
          summary: "Averaged PSF of a finished measurement as a 32-bit float OME-TIFF (voxel size in µm)",
          parameters: idParam,
          responses: { "200": binary("OME-TIFF", "image/tiff"), ...errors(400, 401, 404, 409) },
        },
      },
      "/api/v1/measurements/{id}/baseline": {
        post: {
          summary: "Make a finished check the baseline of a new epoch for its objective",
          parameters: idParam,
          responses: { "200": ok("{ id, purpose }"), ...errors(400, 401, 403, 404, 409, 422) },
        },
      },
      "/api/v1/measurements/{id}/cancel": {
        post: {
          summary: "Cancel a queued or running measurement",
          parameters: idParam,
          responses: { "200": ok("Cancelled"), ...errors(401, 403, 404, 409) },
        },
      },
      "/api/v1/measurements/{id}/rerun": {
        post: {
          summary: "Re-run with changed parameters as a new version",
          parameters: idParam,
          requestBody: json(rerunMeasurementSchema),
          responses: { "202": ok("{ id, status, version }"), ...errors(400, 401, 403, 404, 409) },
        },
      },
      "/api/v1/instruments": {
        get: {
          summary: "Instruments visible to you",
          responses: { "200": ok("Instruments"), ...errors(401) },
        },
        post: {
          summary: "Register an instrument",
          requestBody: json(createInstrumentSchema),
          responses: { "201": ok("Created"), ...errors(400, 401, 403, 415) },
        },
      },
      "/api/v1/objectives": {
        get: { summary: "Objectives visible to you", responses: { "200": ok("Objectives"), ...errors(401) } },
        post: {
          summary: "Register an objective",
          requestBody: json(createObjectiveSchema),
          responses: { "201": ok("Created"), ...errors(400, 401, 403, 415, 422) },
        },
      },
      "/api/v1/objectives/{id}": {
        get: {
          summary: "One objective",
          parameters: idParam,
          responses: { "200": ok("Objective"), ...errors(401, 404) },
        },
        patch: {
          summary: "Change an objective (tolerances: admins only)",
          parameters: idParam,
          requestBody: json(patchObjectiveSchema),
          responses: { "200": ok("Updated"), ...errors(400, 401, 403, 404, 415, 422) },
        },
      },
      "/api/v1/objectives/{id}/trend": {
        get: {
          summary: "The objective's history: checks, control limits, alarms and events",
          parameters: idParam,
          responses: { "200": ok("Trend"), ...errors(400, 401, 404) },
        },
      },
      "/api/v1/objectives/{id}/status": {
        get: {
          summary: "The objective's status as it was on a given day, with a methods paragraph",
          parameters: [
            ...idParam,
            { name: "date", in: "query", required: true, schema: { type: "string", format: "date" } },
          ],
          responses: { "200": ok("Status on that day"), ...errors(400, 401, 404) },
        },
      },
      "/api/v1/objectives/{id}/events": {
        post: {
          summary: "Add a logbook event (cleaning, oil change, service, new bead slide, …)",
          parameters: idParam,
          requestBody: json(createLogbookEventSchema),
          responses: { "201": ok("Created"), ...errors(400, 401, 403, 404, 415, 422) },
        },
      },
      "/api/v1/service-visits": {
        get: {
          summary: "Service visits visible to you",
          responses: { "200": ok("{ visits }"), ...errors(401, 403) },
        },
        post: {
          summary: "Plan a service visit (engineer, instruments, time window)",
          requestBody: json(createServiceVisitSchema),
          responses: { "201": ok("Created"), ...errors(400, 401, 403, 404, 415, 422) },
        },
      },
      "/api/v1/service-visits/{id}": {
        get: {
          summary: "A service visit's as-found/as-left report",
          parameters: idParam,
          responses: { "200": ok("Report"), ...errors(400, 401, 404) },
        },
      },
      "/api/v1/service-visits/{id}/sign-off": {
        post: {
          summary: "Sign off a service visit with its report text",
          parameters: idParam,
          requestBody: json(signOffSchema),
          responses: { "200": ok("{ id, signedOff }"), ...errors(400, 401, 403, 404, 409, 415, 422) },
        },
      },
      "/api/v1/service-visits/{id}/report.pdf": {
        get: {
          summary: "A service visit's report as an A4 PDF (attachment visit-<first day>.pdf)",
          parameters: idParam,
          responses: { "200": binary("PDF", "application/pdf"), ...errors(400, 401, 404) },
        },
      },
      "/api/v1/service-visits/{id}/report/email": {
        post: {
          summary:
            "E-mail a service visit's report (PDF attached) to the facility's admins and the visit's engineer",
          parameters: idParam,
          responses: { "200": ok("{ id, fileName, sentTo }"), ...errors(400, 401, 403, 404, 422, 503) },
        },
      },
      "/api/v1/openapi.json": {
        get: {
          summary: "This document",
          security: [],
          responses: { "200": ok("OpenAPI 3.1 document") },
        },
      },
      "/api/v1/media": {
        get: {
          summary: "The medium library plus the facility's own media",
          responses: { "200": ok("Media"), ...errors(401) },
        },
      },
      "/api/v1/planner": {
        post: {
          summary: "Predict widths, brightness and focal shift against depth; rank objectives",
          requestBody: json(plannerRequestSchema),
          responses: { "200": ok("Predictions"), ...errors(400, 401, 404, 415, 422) },
        },
      },
    },
  };
}
