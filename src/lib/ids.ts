const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** A path id that is not a UUID names nothing: callers answer 404, never a database error. */
export function isUuid(value: string | undefined): value is string {
  return value !== undefined && uuidPattern.test(value);
}
