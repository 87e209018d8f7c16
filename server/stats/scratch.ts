/**
 * Working arrays reused from one call to the next. A screening fits some fifty logistic models over
 * every slab, and each fit needs a handful of arrays as long as the slabs (20–40 MB each at five
 * million). Fresh ones are zeroed pages the kernel must hand over one by one and the collector must
 * take back: measured on the plant's 2-core server, about 4 ms per MB — most of the screening's time
 * at five million slabs. Reused, they cost nothing after the first fit.
 *
 * Each call site names its own slot. What it gets is valid until the same slot is asked for again
 * (the next call of that site), so only arrays that do not outlive their call may come from here;
 * the contents are left over from the last use unless `fill` is given. Everything is synchronous, so
 * no two calls share a slot at once. `shared`: on shared memory, for a screening's helper threads to
 * read while the screening lasts (screening-threads.ts). A helper given up on may still be reading
 * when the next screening rewrites the slot; what it then works is thrown away (its screening's
 * number is past) and it is replaced, so no report reads it. The buffers are let go a while after the last use, so a quiet
 * server does not keep them. Written here because it is a dozen lines; no library does just this.
 */
type Ctor<T> = { new (buffer: ArrayBufferLike, byteOffset: number, length: number): T; BYTES_PER_ELEMENT: number };

const pools = new Map<string, ArrayBuffer | SharedArrayBuffer>();
const RELEASE_AFTER_MS = 30_000;
let release: NodeJS.Timeout | null = null;

export function scratch<T extends Int32Array | Uint8Array | Float64Array>(slot: string, type: Ctor<T>, length: number, fill?: number, shared = false): T {
  const bytes = length * type.BYTES_PER_ELEMENT;
  let buf = pools.get(slot);
  if (!buf || buf.byteLength < bytes || (shared && !(buf instanceof SharedArrayBuffer))) {
    // A little more than asked, so a slightly longer next call does not allocate again.
    const size = Math.ceil((bytes * 1.125) / 8) * 8;
    buf = shared ? new SharedArrayBuffer(size) : new ArrayBuffer(size);
    pools.set(slot, buf);
  }
  if (release) release.refresh();
  else {
    release = setTimeout(() => {
      pools.clear();
      release = null;
    }, RELEASE_AFTER_MS);
    release.unref();
  }
  const out = new type(buf, 0, length);
  if (fill !== undefined) (out as Int32Array).fill(fill);
  return out;
}
