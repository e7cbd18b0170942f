/** An error a person can act on, with the HTTP status and a stable code for API clients. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly field?: string,
    /** Extra facts a client can show, such as every problem found in a boundary. */
    readonly details?: unknown,
  ) {
    super(message);
    this.name = 'AppError';
  }

  toJSON() {
    return {
      error: { code: this.code, message: this.message, ...(this.field ? { field: this.field } : {}), ...(this.details !== undefined ? { details: this.details } : {}) },
    };
  }
}

export const signedOut = () => new AppError(401, 'signed-out', 'Sign in to continue.');
export const forbidden = (message = 'Your account is not allowed to do this.') => new AppError(403, 'forbidden', message);
export const unverifiedLandowner = () =>
  new AppError(403, 'landowner-unverified', 'An admin has not verified your landowner account yet; until then you can draft parcels but not grant permits.');
export const notFound = (what = 'That') => new AppError(404, 'not-found', `${what} was not found.`);
export const invalidInput = (field: string, message: string) => new AppError(400, 'invalid-input', message, field);
export const conflict = (field: string | undefined, message: string) => new AppError(409, 'conflict', message, field);
/** A 429; `retryAfterSeconds` becomes its Retry-After header (RFC 9110 §10.2.3) and a detail for API clients. */
export const tooMany = (message: string, retryAfterSeconds?: number) =>
  new AppError(429, 'rate-limited', message, undefined, retryAfterSeconds === undefined ? undefined : { retryAfterSeconds });
