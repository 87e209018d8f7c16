import { pino, type Logger as PinoLogger } from "pino";

export type Logger = PinoLogger;

/** JSON lines on stdout (pino); level "silent" in tests unless LOG_LEVEL says otherwise. */
export function createLogger(level: "silent" | "error" | "info" | "debug" = "info"): Logger {
  return pino({ level, base: { app: "strandsight" } });
}
