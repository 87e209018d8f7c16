import mt19937 from "@stdlib/random-base-mt19937";
import normalFactory from "@stdlib/random-base-normal";
import poissonFactory from "@stdlib/random-base-poisson";

/**
 * Seeded random draws for the invented demo plant, so it is the same on every machine: one
 * Mersenne Twister (stdlib) feeds the uniform, normal and Poisson draws.
 */
export function createRandom(seed: number) {
  // The typings declare a bare function; the generator also carries `normalized` (uniform on [0, 1)).
  const mt = mt19937.factory({ seed }) as unknown as { normalized: () => number };
  const next = (): number => mt.normalized();
  const normalDraw = normalFactory.factory({ prng: mt.normalized });
  const poissonDraw = poissonFactory.factory({ prng: mt.normalized });
  return {
    next,
    normal: (mean = 0, sd = 1) => normalDraw(mean, sd),
    poisson: (lambda: number) => poissonDraw(lambda),
    uniform: (lo: number, hi: number) => lo + (hi - lo) * next(),
    int: (lo: number, hi: number) => lo + Math.floor(next() * (hi - lo + 1)),
    chance: (p: number) => next() < p,
    pick: <T>(items: readonly T[]): T => items[Math.floor(next() * items.length)]!,
    weighted: <T>(items: readonly (readonly [T, number])[]): T => {
      const total = items.reduce((s, [, w]) => s + w, 0);
      let x = next() * total;
      for (const [item, w] of items) {
        x -= w;
        if (x <= 0) return item;
      }
      return items[items.length - 1]![0];
    },
  };
}
export type Random = ReturnType<typeof createRandom>;
