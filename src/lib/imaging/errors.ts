import type { ImagingErrorCode } from './tiffTypes';

export type { ImagingErrorCode } from './tiffTypes';

/** Domain failure of the imaging layer; `message` is written for the person who uploaded the file. */
export class ImagingError extends Error {
  /**
   * @param code - snake_case error code
   * @param message - a sentence a biologist can act on
   * @param details - for logs and tests
   */
  constructor(
    readonly code: ImagingErrorCode,
    message: string,
    readonly details?: Record<string, unknown>,
  ) {
    super(message);
    this.name = 'ImagingError';
  }
}
