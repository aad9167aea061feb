/**
 * Maps every failure to the catalogue body `{ error: { code, message, path? } }`.
 * Caller mistakes get a 4xx with a stable code; anything unexpected is logged and answered 500.
 */
import type { FastifyError, FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import { ModelError } from '../problem.js';
import { ApiError, ERROR_CATALOGUE, errorBody, type ErrorCode } from './errors.js';

/** `/a/b/0/c` → `a.b[0].c` */
export function pointerToPath(pointer: string): string {
  return pointer
    .split('/')
    .filter((s) => s !== '')
    .map((s) => (/^\d+$/.test(s) ? `[${s}]` : `.${s}`))
    .join('')
    .replace(/^\./, '');
}

interface RouteErrorConfig {
  /** Code used for body schema failures on this route (default invalid-request). */
  bodyErrorCode?: ErrorCode;
  /** Codes by the first segment of the failing body field (e.g. vehicle → vehicle-invalid). */
  bodyErrorCodes?: Record<string, ErrorCode>;
}

export function sendError(reply: FastifyReply, code: ErrorCode, message: string, path?: string): FastifyReply {
  return reply.code(ERROR_CATALOGUE[code].status).type('application/json').send(errorBody(code, message, path));
}

export function installErrorHandling(app: FastifyInstance): void {
  app.setErrorHandler((err: FastifyError & { validationContext?: string }, request: FastifyRequest, reply: FastifyReply) => {
    if (err instanceof ApiError) return sendError(reply, err.code, err.message, err.path);
    if (err instanceof ModelError) return sendError(reply, err.code, err.message, err.path);
    if (Array.isArray(err.validation) && err.validation.length > 0) {
      const first = err.validation[0]!;
      const ctx = err.validationContext ?? 'body';
      const field = pointerToPath(first.instancePath ?? '');
      if (ctx === 'params') {
        return sendError(reply, 'invalid-name', `${field || 'name'}: ${first.message ?? 'invalid'}`, field || undefined);
      }
      const cfg = (request.routeOptions.config ?? {}) as RouteErrorConfig;
      const head = field.split(/[.[]/)[0] ?? '';
      const code: ErrorCode = ctx === 'body' ? (cfg.bodyErrorCodes?.[head] ?? cfg.bodyErrorCode ?? 'invalid-request') : 'invalid-request';
      const where = ctx === 'body' ? field : [ctx, field].filter(Boolean).join('.');
      return sendError(reply, code, `${where ? where + ': ' : ''}${first.message ?? 'invalid value'}`, where || undefined);
    }
    switch (err.code) {
      case 'FST_ERR_CTP_BODY_TOO_LARGE':
        return sendError(reply, 'too-large', `the body is larger than this route allows (${request.routeOptions.bodyLimit ?? 'limit'} bytes)`);
      case 'FST_ERR_CTP_INVALID_MEDIA_TYPE':
        return sendError(reply, 'unsupported-media-type', `content type ${JSON.stringify(request.headers['content-type'] ?? '')} is not accepted here`);
      case 'FST_ERR_CTP_EMPTY_JSON_BODY':
        return sendError(reply, 'invalid-json', 'the body is empty; a JSON document was expected');
      case 'FST_ERR_CTP_INVALID_JSON_BODY':
      case 'FST_ERR_CTP_INVALID_CONTENT_LENGTH':
        return sendError(reply, 'invalid-json', err.message);
    }
    if (err instanceof SyntaxError || (err.statusCode === 400 && /JSON/i.test(err.message))) {
      return sendError(reply, 'invalid-json', `the body is not valid JSON: ${err.message}`);
    }
    if (typeof err.statusCode === 'number' && err.statusCode >= 400 && err.statusCode < 500) {
      const code: ErrorCode = err.statusCode === 404 ? 'not-found' : err.statusCode === 413 ? 'too-large' : err.statusCode === 415 ? 'unsupported-media-type' : err.statusCode === 429 ? 'too-many-jobs' : err.statusCode === 401 ? 'unauthorized' : 'invalid-request';
      return sendError(reply, code, err.message);
    }
    request.log.error({ err }, 'unhandled error');
    return sendError(reply, 'internal', `internal error (request ${request.id}); this is a fault of the service`);
  });
  app.setNotFoundHandler((request, reply) => sendError(reply, 'not-found', `no route ${request.method} ${request.url.split('?')[0]}`));
}
