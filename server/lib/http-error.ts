/** The one error type services throw; the error middleware turns it into `{ error: { code, message, details } }`. */
export class HttpError extends Error {
  constructor(
    public readonly status: number,
    public readonly code: string,
    message: string,
    public readonly details?: unknown,
  ) {
    super(message);
    this.name = "HttpError";
  }
}

export const badRequest = (message: string, details?: unknown, code = "bad_request") => new HttpError(400, code, message, details);
export const notFound = (message: string, details?: unknown) => new HttpError(404, "not_found", message, details);
export const conflict = (message: string, details?: unknown) => new HttpError(409, "conflict", message, details);
export const forbidden = (message: string) => new HttpError(403, "forbidden", message);
