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
 * Output layout (length 3 + p + 3 P, P = p (p + 1) / 2, matrices packed lower-triangular by rows):
 *   [sum w, sum w u, X'Wy (p), X'WX (P), X'WUX (P), X'WU^2X (P), sum a log(v + tau^2)]; entries
 *   beyond `level` (and the log sum, unless asked for) are zero.
 */

/** 0: X'WX only; 1: also X'WUX; 2: also X'WU^2X. */
export type KernelLevel = 0 | 1 | 2;

/**
 * Weights as given: reads u_i and w_i from `unitWeights` and `weights`.
 * Example: ordinary least squares passes u = 1 and w = the case weights (or 1).
 */
export type CrossProductKernel = (
  design: Float64Array,
  k: number,
  weights: Float64Array,
  unitWeights: Float64Array,
  estimates: Float64Array,
  out: Float64Array,
) => void;

/**
 * Weights at a trial tau^2, formed in the same pass: u_i = 1 / (v_i + tau^2), w_i = a_i u_i (a_i = 1
 * when `caseWeights` is null), written to `unitWeights` and `weights` for the passes that follow,
 * and (with `withLog`) sum a_i log(v_i + tau^2) in the last entry of `out`.
 */
export type Tau2CrossProductKernel = (
  design: Float64Array,
  k: number,
  variances: Float64Array,
  tau2: number,
  caseWeights: Float64Array | null,
  estimates: Float64Array,
  unitWeights: Float64Array,
  weights: Float64Array,
  out: Float64Array,
) => void;

const LARGEST_UNROLLED = 8;
const cache = new Map<string, Tau2CrossProductKernel>();

/** Output length: 2 + p + 3 P sums, then sum a log(v + tau^2). */
export function kernelOutputLength(p: number): number {
  return 3 + p + (3 * p * (p + 1)) / 2;
}

type WeightSource = { kind: "given" } | { kind: "tau2"; caseWeights: boolean; log: boolean };

/** With given weights the kernels ignore `variances`, `tau2` and `caseWeights`. */
const NO_VARIANCES = new Float64Array(0);

function nestedLoopKernel(p: number, level: KernelLevel, source: WeightSource): Tau2CrossProductKernel {
  const packed = (p * (p + 1)) / 2;
  return (design, k, variances, tau2, caseWeights, estimates, unitWeights, weights, out) => {
    out.fill(0);
    const xtwyAt = 2;
    const s1At = 2 + p;
    const s2At = s1At + packed;
    const s3At = s2At + packed;
    const logAt = s3At + packed;
    for (let i = 0; i < k; i += 1) {
      let u: number;
      let w: number;
      if (source.kind === "given") {
        u = unitWeights[i]!;
        w = weights[i]!;
      } else {
        const total = variances[i]! + tau2;
        u = 1 / total;
        w = caseWeights === null ? u : caseWeights[i]! * u;
        unitWeights[i] = u;
        weights[i] = w;
        if (source.log) out[logAt] += (caseWeights === null ? 1 : caseWeights[i]!) * Math.log(total);
      }
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

function unrolledSource(p: number, level: KernelLevel, source: WeightSource): string {
  const packed = (p * (p + 1)) / 2;
  const pairs: [number, number][] = [];
  for (let r = 0; r < p; r += 1) for (let c = 0; c <= r; c += 1) pairs.push([r, c]);
  const accumulators = ["sw", "swu", "sl", ...Array.from({ length: p }, (_, r) => `y${r}`), ...pairs.map((_, j) => `a${j}`)];
  if (level > 0) accumulators.push(...pairs.map((_, j) => `b${j}`));
  if (level > 1) accumulators.push(...pairs.map((_, j) => `c${j}`));
  const weighting =
    source.kind === "given"
      ? ["const u = unitWeights[i], w = weights[i];"]
      : [
          "const total = variances[i] + tau2, u = 1 / total;",
          `const w = ${source.caseWeights ? "caseWeights[i] * u" : "u"};`,
          "unitWeights[i] = u; weights[i] = w;",
          source.log ? `sl += ${source.caseWeights ? "caseWeights[i] * " : ""}Math.log(total);` : "",
        ];
  const body: string[] = [
    `let ${accumulators.map((name) => `${name} = 0`).join(", ")};`,
    "for (let i = 0; i < k; i++) {",
    ...weighting,
    `const wu = w * u, wuu = wu * u, wy = w * estimates[i], o = i * ${p};`,
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
    `out[${2 + p + 3 * packed}] = sl;`,
  ];
  if (level > 0) body.push(...pairs.map((_, j) => `out[${2 + p + packed + j}] = b${j};`));
  if (level > 1) body.push(...pairs.map((_, j) => `out[${2 + p + 2 * packed + j}] = c${j};`));
  return body.join("\n");
}

const PARAMETERS = ["design", "k", "variances", "tau2", "caseWeights", "estimates", "unitWeights", "weights", "out"];

function compiled(p: number, level: KernelLevel, source: WeightSource) {
  const key = `${p}:${level}:${JSON.stringify(source)}`;
  const cached = cache.get(key);
  if (cached) return cached as Tau2CrossProductKernel;
  let kernel = nestedLoopKernel(p, level, source);
  if (p <= LARGEST_UNROLLED) {
    try {
      kernel = new Function(...PARAMETERS, unrolledSource(p, level, source)) as Tau2CrossProductKernel;
    } catch {
      // Code generation is disallowed here: keep the nested loop.
    }
  }
  cache.set(key, kernel);
  return kernel;
}

/**
 * The kernel for p columns at `level` with the weights as given, compiled on first use.
 * Example: crossProductKernel(1, 0)(Float64Array.of(1, 1), 2, w, u, y, out) puts sum w in out[0]
 * and sum w y in out[2].
 */
export function crossProductKernel(p: number, level: KernelLevel): CrossProductKernel {
  const kernel = compiled(p, level, { kind: "given" });
  return (design, k, weights, unitWeights, estimates, out) => kernel(design, k, NO_VARIANCES, 0, null, estimates, unitWeights, weights, out);
}

/**
 * The kernel for p columns at `level` forming the weights at tau^2 in the same pass.
 * Example: tau2CrossProductKernel(1, 0, false, true)(ones, k, v, 0.1, null, y, u, w, out).
 */
export function tau2CrossProductKernel(p: number, level: KernelLevel, caseWeights: boolean, withLog: boolean): Tau2CrossProductKernel {
  return compiled(p, level, { kind: "tau2", caseWeights, log: withLog });
}

/** The nested-loop kernels, exported so tests can check the generated ones against them. */
export function referenceCrossProductKernel(p: number, level: KernelLevel): CrossProductKernel {
  const kernel = nestedLoopKernel(p, level, { kind: "given" });
  return (design, k, weights, unitWeights, estimates, out) => kernel(design, k, NO_VARIANCES, 0, null, estimates, unitWeights, weights, out);
}

export function referenceTau2CrossProductKernel(p: number, level: KernelLevel, caseWeights: boolean, withLog: boolean): Tau2CrossProductKernel {
  return nestedLoopKernel(p, level, { kind: "tau2", caseWeights, log: withLog });
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
