import { ApiError } from './client';

/** The one place that turns an error into words for the person at the bench. */
export function describeError(err: unknown): string {
  if (err instanceof ApiError) {
    switch (err.code) {
      case 'unauthenticated':
        return err.message || 'Sign in first.';
      case 'csrf':
        return 'This page has been open a long time. Reload it and try again.';
      case 'rate_limited':
        return err.message;
      case 'unavailable':
        return 'The database is not answering. Try again in a moment.';
      case 'internal':
        return 'Something went wrong on the server. Your input is still here; try again.';
      default:
        return err.message;
    }
  }
  return err instanceof Error ? err.message : 'Something went wrong.';
}
