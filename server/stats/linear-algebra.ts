/**
 * Small dense linear algebra for the likelihood fits (a dozen parameters at most), shared by the
 * single- and multi-variable logistic regressions.
 */

/**
 * Inverse of a small symmetric positive definite matrix by Cholesky; null when it is singular.
 * `relativeTolerance` 0 keeps the historical test (a pivot ≤ 1e-300); a positive value also refuses
 * a pivot below that share of its diagonal element, which is how exact collinearity shows up once
 * rounding has left a tiny positive pivot.
 */
export function choleskyInverse(a: number[][], relativeTolerance = 0): number[][] | null {
  const k = a.length;
  const l = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i]![j]!;
      for (let m = 0; m < j; m++) s -= l[i]![m]! * l[j]![m]!;
      if (i === j) {
        if (s <= 1e-300 || s <= relativeTolerance * a[i]![i]!) return null;
        l[i]![i] = Math.sqrt(s);
      } else l[i]![j] = s / l[j]![j]!;
    }
  }
  // Inverse via forward/back substitution on the identity columns.
  const inv = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let c = 0; c < k; c++) {
    const y = new Array<number>(k).fill(0);
    for (let i = 0; i < k; i++) {
      let s = i === c ? 1 : 0;
      for (let m = 0; m < i; m++) s -= l[i]![m]! * y[m]!;
      y[i] = s / l[i]![i]!;
    }
    for (let i = k - 1; i >= 0; i--) {
      let s = y[i]!;
      for (let m = i + 1; m < k; m++) s -= l[m]![i]! * inv[m]![c]!;
      inv[i]![c] = s / l[i]![i]!;
    }
  }
  return inv;
}

/**
 * The first column (in order) whose Cholesky pivot falls below `relativeTolerance` of its diagonal
 * element: that column is (numerically) a linear combination of the columns before it. −1 when the
 * matrix is positive definite to that tolerance.
 */
export function firstDependentColumn(a: number[][], relativeTolerance: number): number {
  const k = a.length;
  const l = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i]![j]!;
      for (let m = 0; m < j; m++) s -= l[i]![m]! * l[j]![m]!;
      if (i === j) {
        if (!(s > relativeTolerance * a[i]![i]!) || s <= 1e-300) return i;
        l[i]![i] = Math.sqrt(s);
      } else l[i]![j] = s / l[j]![j]!;
    }
  }
  return -1;
}

/** ln det of a symmetric positive definite matrix (Cholesky); null when it is not positive definite. */
export function logDeterminant(a: number[][]): number | null {
  const k = a.length;
  const l = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  let sum = 0;
  for (let i = 0; i < k; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i]![j]!;
      for (let m = 0; m < j; m++) s -= l[i]![m]! * l[j]![m]!;
      if (i === j) {
        if (s <= 0) return null;
        l[i]![i] = Math.sqrt(s);
        sum += Math.log(s);
      } else l[i]![j] = s / l[j]![j]!;
    }
  }
  return sum;
}

/** A Bᵀ-style congruence: T V Tᵀ for a square V and a matrix T with as many columns as V. */
export function congruence(t: number[][], v: number[][]): number[][] {
  const r = t.length;
  const k = v.length;
  const tv = t.map((row) => Array.from({ length: k }, (_, j) => row.reduce((s, x, m) => s + x * v[m]![j]!, 0)));
  return Array.from({ length: r }, (_, i) => Array.from({ length: r }, (_, j) => tv[i]!.reduce((s, x, m) => s + x * t[j]![m]!, 0)));
}

/** Rows/columns `idx` of a square matrix. */
export function subMatrix(a: number[][], idx: number[]): number[][] {
  return idx.map((i) => idx.map((j) => a[i]![j]!));
}
