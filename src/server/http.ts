import type { APIContext, APIRoute } from 'astro';
import { z } from 'zod';
import { AppError, forbidden, invalidInput, notFound, signedOut, unverifiedLandowner } from '../lib/errors';
import { isUuid } from '../lib/ids';
import { jsonDepth, maxJsonDepth } from '../lib/json-depth';
import { readCapped } from './request-body';
import { decide, type Action, type Resource } from '../lib/permissions';
import type { Actor } from '../lib/actor';
import { log } from './log';

export function json(body: unknown, status = 200, headers: HeadersInit = {}) {
  return new Response(JSON.stringify(body), { status, headers: { 'content-type': 'application/json', ...headers } });
}

/** Wraps an endpoint so that every failure answers with the same JSON shape. */
export function endpoint(handler: (context: APIContext) => Promise<Response>): APIRoute {
  return async (context) => {
    try {
      return await handler(context);
    } catch (error) {
      if (error instanceof AppError) return json(error.toJSON(), error.status, { ...retryAfter(error), ...closeUnreadBody(error) });
      const refused = fromDatabaseRefusal(error);
      if (refused) return json(refused.toJSON(), refused.status);
      (context.locals?.log ?? log).error({ err: error, route: context.routePattern }, 'endpoint failed');
      if (lostDatabaseConnection(error)) {
        const lost = context.request.method === 'GET' || context.request.method === 'HEAD' ? databaseUnavailable() : resultUnknown();
        return json(lost.toJSON(), lost.status, { 'retry-after': '5' });
      }
      return json({ error: { code: 'internal', message: 'Something went wrong on our side. Try again in a moment; if it keeps happening, tell us what you were doing and quote this request id.', requestId: context.locals?.log?.bindings().requestId } }, 500);
    }
  };
}

/**
 * The connection to PostgreSQL broke (postgres.js's connection codes, a socket error, or SQLSTATE
 * class 08 and the 57P0x shutdowns, PostgreSQL manual Appendix A). A COMMIT may have reached the
 * server before the answer was lost, so a write's outcome is unknown.
 */
export function lostDatabaseConnection(error: unknown): boolean {
  const cause = (error as { cause?: unknown })?.cause ?? error;
  const code = (cause as { code?: unknown })?.code;
  if (typeof code !== 'string') return false;
  return (
    ['CONNECTION_CLOSED', 'CONNECTION_ENDED', 'CONNECTION_DESTROYED', 'CONNECT_TIMEOUT', 'ECONNRESET', 'ECONNREFUSED', 'EPIPE', 'ETIMEDOUT'].includes(code) ||
    code.startsWith('08') ||
    ['57P01', '57P02', '57P03'].includes(code)
  );
}

const resultUnknown = () =>
  new AppError(
    503,
    'result-unknown',
    'The connection to our database broke while this was being saved, so we cannot tell whether it was. Look before doing it again; a harvest entry or correction sent again with the same idempotency key is never saved twice.',
  );
const databaseUnavailable = () => new AppError(503, 'database-unavailable', 'Our database is not answering just now. Try again in a minute.');

/**
 * A body refused before it was read whole (413, 415) is still on its way: the connection is closed
 * after the answer (RFC 9112 §9.6), or a client that reuses it would wait behind the rest of it.
 */
function closeUnreadBody(error: AppError): Record<string, string> {
  return error.status === 413 || error.status === 415 ? { connection: 'close' } : {};
}

function retryAfter(error: AppError): Record<string, string> {
  const seconds = (error.details as { retryAfterSeconds?: unknown } | undefined)?.retryAfterSeconds;
  return error.status === 429 && typeof seconds === 'number' ? { 'retry-after': String(seconds) } : {};
}

/** The most a JSON body may hold unless its route allows more: every form the app sends is a few kilobytes. */
export const jsonBodyBytes = 64 * 1024;
/**
 * Routes that carry a boundary or zone (GeoJSON coordinates) allow this much: a boundary at the
 * vertex cap (10 000 corners, src/lib/boundaries/validate.ts) at full double precision is about 0.4 MB.
 */
export const geometryBodyBytes = 2 * 1024 * 1024;

const sizeInWords = (bytes: number) => (bytes >= 1024 * 1024 ? `${bytes / 1024 / 1024} MB` : `${bytes / 1024} KB`);

export const bodyTooLarge = (limit: number, field = 'body') =>
  new AppError(413, 'body-too-large', `This request is larger than ${sizeInWords(limit)}, the most this action takes. Send less.`, field);

/**
 * Reads and validates a JSON body; a bad body is a 400 naming the field. The body is read only up to
 * `maxBytes` (413 at once past it), must be sent as application/json (415 otherwise) and may nest
 * no deeper than any form needs (400) before it is parsed.
 */
export async function readJson<S extends z.ZodType>(request: Request, schema: S, { maxBytes = jsonBodyBytes } = {}): Promise<z.infer<S>> {
  const type = (request.headers.get('content-type') ?? '').split(';')[0]?.trim().toLowerCase() ?? '';
  if (type !== 'application/json' && !type.endsWith('+json')) {
    void request.body?.cancel().catch(() => {}); // not awaited: the stream may never end
    throw new AppError(415, 'unsupported-media-type', 'Send the request body as JSON, with the header Content-Type: application/json.', 'body');
  }
  const bytes = await readCapped(request, maxBytes, () => bodyTooLarge(maxBytes));
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    throw invalidInput('body', 'The request body is not UTF-8 text; send it as JSON.');
  }
  if (jsonDepth(text, maxJsonDepth) > maxJsonDepth) throw invalidInput('body', `The request body nests deeper than ${maxJsonDepth} levels; no form of this app needs that.`);
  let body: unknown;
  try {
    body = JSON.parse(text);
  } catch {
    throw invalidInput('body', 'The request body must be JSON.');
  }
  return parseInput(schema, body);
}

export function parseInput<S extends z.ZodType>(schema: S, value: unknown): z.infer<S> {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const issue = result.error.issues[0];
  throw invalidInput(issue?.path.join('.') || 'body', issue?.message ?? 'Invalid input.');
}

/** Throws the right 401/403/404 unless the permission table allows the action. */
export function guard(actor: Actor | null, action: Action, resource?: Resource): Actor {
  if (!actor) throw signedOut();
  const decision = decide(actor, action, resource);
  if (decision.allowed) return actor;
  switch (decision.reason) {
    case 'signed-out':
      throw signedOut();
    case 'forbidden':
      throw forbidden();
    case 'unverified':
      throw unverifiedLandowner();
    case 'not-found':
      throw notFound();
  }
}

/** Form posts from plain HTML get a redirect; API clients get JSON. */
export function wantsRedirect(request: Request) {
  return (request.headers.get('content-type') ?? '').startsWith('application/x-www-form-urlencoded');
}

/** A path id; one that is not a UUID names nothing, so it is a 404 like any unknown id. */
export function idParam(value: string | undefined, what: string): string {
  if (!isUuid(value)) throw notFound(what);
  return value;
}

/**
 * The database as the last line of defence: a constraint it enforces becomes a 4xx that says what
 * was refused, never a 500. (SQLSTATE classes per the PostgreSQL manual, Appendix A.)
 */
function fromDatabaseRefusal(error: unknown): AppError | null {
  const cause = (error as { cause?: unknown })?.cause ?? error;
  const code = (cause as { code?: unknown })?.code;
  if (typeof code !== 'string') return null;
  if (code === '23505') return new AppError(409, 'conflict', 'That already exists; nothing was changed.');
  if (code === '23503') return new AppError(400, 'invalid-input', 'That refers to something that does not exist; nothing was changed.');
  if (code === '23514' || code === '23502') return new AppError(400, 'invalid-input', 'That value is not allowed here; nothing was changed.');
  if (code.startsWith('22')) return new AppError(400, 'invalid-input', 'A value is out of range or malformed; nothing was changed.');
  return null;
}
