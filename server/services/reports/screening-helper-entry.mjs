// Entry of a screening helper thread (screening-threads.ts) from the sources. On Node 20 a worker
// thread does not get the module hooks that `tsx` registered on the main thread, so tsx's API is
// registered here before the TypeScript module is imported. The compiled server starts
// build/server/screening-helper.js.
import { fileURLToPath } from "node:url";
import { register } from "tsx/esm/api";

register({ tsconfig: fileURLToPath(new URL("../../../tsconfig.json", import.meta.url)) });
await import("./screening-helper-worker.ts");
