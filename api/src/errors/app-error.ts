/** Field path (dotted, e.g. `data.wastegate.valveDiameterM`) → what is wrong with it. */
export type FieldErrors = Record<string, string>;

/**
 * An expected failure the client can act on. Anything that is not an AppError (or one of the
 * library errors the error middleware knows) is a bug and becomes a generic 500.
 */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly fields?: FieldErrors,
  ) {
    super(message);
    this.name = 'AppError';
  }

  static validation(fields: FieldErrors, message = 'Some fields are not valid.'): AppError {
    return new AppError(400, 'validation_failed', message, fields);
  }

  static unauthorized(message = 'Sign in to continue.', code = 'unauthorized'): AppError {
    return new AppError(401, code, message);
  }

  static forbidden(message = 'Your role does not allow this.'): AppError {
    return new AppError(403, 'forbidden', message);
  }

  /** Also what another workspace's record gets, so its existence is not revealed. */
  static notFound(what: string): AppError {
    return new AppError(404, 'not_found', `${what} was not found.`);
  }

  static conflict(code: string, message: string): AppError {
    return new AppError(409, code, message);
  }
}
