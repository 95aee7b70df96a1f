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
import { createMeasurementSchema, rerunMeasurementSchema } from "../../contracts/measurements";
import { plannerRequestSchema } from "../../contracts/planner";
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
      "/api/v1/uploads": {
        post: {
          summary: "Resumable upload (tus 1.0.0 protocol); the finishing PATCH returns the stack",
          responses: { "201": { description: "Upload created" }, ...errors(401, 413) },
        },
      },
      "/api/v1/measurements": {
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
          summary: "One row per bead (JSON or CSV)",
          parameters: [
            ...idParam,
            { name: "format", in: "query", schema: { type: "string", enum: ["json", "csv"] } },
          ],
          responses: { "200": ok("Beads"), ...errors(400, 401, 404) },
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
