import { getEnv } from "@/env";
import { handle, json } from "@/server/http/handler";
import { buildOpenApiDocument } from "@/server/http/openapi";

export const GET = handle(async () => json(buildOpenApiDocument(getEnv().APP_URL)));
