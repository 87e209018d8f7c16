// Entry of the risk training thread (train-thread.ts) from the sources: on Node 20 a worker thread
// does not get the module hooks `tsx` registered on the main thread, so tsx's API is registered here
// before the TypeScript module is imported. The compiled server starts build/server/risk-train.js.
import { fileURLToPath } from "node:url";
import { register } from "tsx/esm/api";

register({ tsconfig: fileURLToPath(new URL("../../../tsconfig.json", import.meta.url)) });
await import("./train-worker.ts");
