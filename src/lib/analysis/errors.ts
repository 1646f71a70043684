/** Domain failure of the analysis core (bad fiducials, empty mask, ...). Routes map it to HTTP 422. */
export class AnalysisError extends Error {
  readonly code: string;
  readonly details?: Record<string, unknown>;

  /**
   * @param code - snake_case machine-readable code, e.g. `degenerate_fiducials`
   * @param message - a sentence a person can act on, naming the value and the expectation
   * @param details - extra values for the client (counts, thresholds)
   */
  constructor(code: string, message: string, details?: Record<string, unknown>) {
    super(message);
    this.name = 'AnalysisError';
    this.code = code;
    this.details = details;
  }
}
