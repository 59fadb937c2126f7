export { AppError, type FieldErrors } from './app-error.ts';
export { errorMiddleware, toErrorResponse, zodFields, type ErrorBody } from './error-middleware.ts';
