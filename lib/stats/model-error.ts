/**
 * Thrown by model code when a fit cannot be computed from its input (zero variances, too few
 * observations, a rank-deficient design...). The message says why in words a user can act on.
 * lib/stats stays free of the application error type; the edges translate this to `cannot_compute`.
 */
export class ModelInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ModelInputError";
  }
}
