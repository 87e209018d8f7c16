/**
 * A key made on the device for an entry or a photo, so that sending it twice stores it once.
 * crypto.randomUUID exists only in secure contexts (https, localhost); a tablet on a plant network
 * over plain http still gets a random v4 UUID from getRandomValues.
 */
export function newClientKey(): string {
  if (typeof crypto.randomUUID === "function") return crypto.randomUUID();
  const b = crypto.getRandomValues(new Uint8Array(16));
  b[6] = (b[6]! & 0x0f) | 0x40;
  b[8] = (b[8]! & 0x3f) | 0x80;
  const h = [...b].map((x) => x.toString(16).padStart(2, "0")).join("");
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
}
