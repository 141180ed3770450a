/**
 * Long computations written as generators that yield after each step (one model fit, one block
 * of bootstrap replicates), so the same code runs straight through in a test or the CLI and in
 * slices in a background job, which reports progress and can be stopped between steps. The
 * result never depends on how it was driven: steps only say how far the work has got.
 */

/** How far a computation has got: `done` of `total` units of its current phase, in words. */
export interface ComputationStep {
  /** Fraction of the whole computation done, in [0, 1]. */
  fraction: number;
  /** What is being done, e.g. "fitting fledgling number, 2011 (12 of 140 models)". */
  message: string;
}

export type Stepwise<T> = Generator<ComputationStep, T, void>;

/** Runs a stepwise computation to its end at once and returns its result. */
export function runToCompletion<T>(computation: Stepwise<T>): T {
  for (;;) {
    const next = computation.next();
    if (next.done) return next.value;
  }
}

export interface SliceOptions {
  /** Told after a slice of steps with the latest step; may throw to stop the computation. */
  onStep?: (step: ComputationStep) => Promise<void>;
  /** Stops the computation between steps (throws the signal's reason). */
  signal?: AbortSignal;
  /** Longest stretch of steps run before giving way to the event loop. Default 100 ms. */
  sliceMs?: number;
}

const yieldToEventLoop = () => new Promise<void>((resolve) => setImmediate(resolve));

/**
 * Runs a stepwise computation in slices of about `sliceMs`, giving way to the event loop between
 * slices (so timers, such as a job's cancellation check, and other work get their turn) and
 * telling `onStep` where it has got. Returns the same result as runToCompletion.
 * Throws whatever `onStep` throws, the signal's reason when it is aborted, or the computation's own error.
 */
export async function runInSlices<T>(computation: Stepwise<T>, options: SliceOptions = {}): Promise<T> {
  const sliceMs = options.sliceMs ?? 100;
  let sliceStart = performance.now();
  for (;;) {
    options.signal?.throwIfAborted();
    const next = computation.next();
    if (next.done) return next.value;
    if (performance.now() - sliceStart >= sliceMs) {
      await options.onStep?.(next.value);
      await yieldToEventLoop();
      sliceStart = performance.now();
    }
  }
}

/**
 * A part of a larger computation: passes the part's steps on with their fractions mapped into
 * [from, to] of the whole, and returns the part's result (use with `yield*`).
 */
export function* asPhase<T>(part: Stepwise<T>, from: number, to: number): Stepwise<T> {
  for (;;) {
    const next = part.next();
    if (next.done) return next.value;
    yield { fraction: from + (to - from) * next.value.fraction, message: next.value.message };
  }
}
