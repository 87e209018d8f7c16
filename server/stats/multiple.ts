/**
 * Benjamini–Hochberg adjusted p-values (step-up; Benjamini & Hochberg 1995): the smallest false
 * discovery rate at which each hypothesis would be rejected. Returned in the input order.
 */
export function benjaminiHochberg(p: number[]): number[] {
  const m = p.length;
  const order = p.map((v, i) => [v, i] as const).sort((a, b) => a[0] - b[0]);
  const adjusted = new Array<number>(m);
  let running = 1;
  for (let k = m - 1; k >= 0; k--) {
    const [v, i] = order[k]!;
    running = Math.min(running, (v * m) / (k + 1));
    adjusted[i] = Math.min(1, running);
  }
  return adjusted;
}
