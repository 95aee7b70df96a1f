// tus endpoint for resumable browser uploads; see src/server/http/tus-uploads.ts.
import { handle } from "@/server/http/handler";
import { getTusServer } from "@/server/http/tus-uploads";

export const runtime = "nodejs";

const tus = handle(async (req: Request) => getTusServer().handleWeb(req));

export const POST = tus;
export const PATCH = tus;
export const HEAD = tus;
export const DELETE = tus;
export const OPTIONS = tus;
export const GET = tus;
