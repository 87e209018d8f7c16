import { badRequest, said } from "./http-error";

const DATE = /^(\d{4})-(\d{2})-(\d{2})$/;

/**
 * A date (YYYY-MM-DD, the whole UTC day) or an ISO date-time, to milliseconds. A date that does not
 * exist (2033-02-30) is refused, not rolled over into the next month as Date.parse would.
 */
export function parseDateBound(value: string | undefined, end: boolean, field: string): number | undefined {
  if (!value) return undefined;
  const m = DATE.exec(value);
  if (m) {
    const start = Date.UTC(+m[1]!, +m[2]! - 1, +m[3]!);
    const back = new Date(start);
    if (Number.isNaN(start) || back.getUTCFullYear() !== +m[1]! || back.getUTCMonth() !== +m[2]! - 1 || back.getUTCDate() !== +m[3]!) {
      throw badRequest(said("dates.notInCalendar", { field, value }), { field });
    }
    return end ? start + 86_400_000 - 1 : start;
  }
  const t = Date.parse(value);
  if (Number.isNaN(t)) throw badRequest(said("dates.notADate", { field, value }), { field });
  return t;
}
