import type { APIContext, APIRoute } from 'astro';
import { z } from 'zod';
import { AppError, forbidden, invalidInput, notFound, signedOut, unverifiedLandowner } from '../lib/errors';
import { isUuid } from '../lib/ids';
import { decide, type Action, type Resource } from '../lib/permissions';
import type { Actor } from '../lib/actor';

export function json(body: unknown, status = 200, headers: HeadersInit = {}) {
  return new Response(JSON.stringify(body), { status, headers: { 'content-type': 'application/json', ...headers } });
}

/** Wraps an endpoint so that every failure answers with the same JSON shape. */
export function endpoint(handler: (context: APIContext) => Promise<Response>): APIRoute {
  return async (context) => {
    try {
      return await handler(context);
    } catch (error) {
      if (error instanceof AppError) return json(error.toJSON(), error.status);
      const refused = fromDatabaseRefusal(error);
      if (refused) return json(refused.toJSON(), refused.status);
      console.error(error);
      return json({ error: { code: 'internal', message: 'Something went wrong on our side; nothing was changed. Try again.' } }, 500);
    }
  };
}

/** Reads and validates a JSON body; a bad body is a 400 naming the field. */
export async function readJson<S extends z.ZodType>(request: Request, schema: S): Promise<z.infer<S>> {
  let body: unknown;
  try {
    body = await request.json();
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
