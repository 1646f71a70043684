import { AsyncLocalStorage } from 'node:async_hooks';

/**
 * Per-request facts that code deep in a library callback needs (Auth.js's authorize() gets no
 * socket address): set by the middleware around each request.
 */
export const requestContext = new AsyncLocalStorage<{ ip: string }>();

export const currentIp = () => requestContext.getStore()?.ip ?? 'unknown';
