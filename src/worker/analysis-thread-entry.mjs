// Worker-thread entry: worker threads do not inherit the TypeScript loader of the
// main thread, so register it here, then load the TypeScript thread module.
import { register } from "tsx/esm/api";

register();
await import("./analysis-thread.ts");
