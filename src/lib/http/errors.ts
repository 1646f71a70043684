/** An error with an HTTP status and a message a person can act on; `handle()` turns it into JSON. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly issues?: unknown,
  ) {
    super(message);
    this.name = 'HttpError';
  }
}

export const unauthorized = () => new HttpError(401, 'unauthorized', 'Sign in to continue.');
export const forbidden = (what = 'do this') => new HttpError(403, 'forbidden', `Your role does not allow you to ${what}.`);
export const notFound = (what: string) => new HttpError(404, 'not_found', `${what} was not found, or you are not a member of its study.`);
export const conflict = (message: string) => new HttpError(409, 'conflict', message);
