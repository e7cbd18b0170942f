import type { AppError } from '../lib/errors';

/**
 * A request's body, read while it streams and stopped at `limit` bytes: a declared Content-Length
 * over the limit is refused before a byte is read, and a body without one (chunked) or lying about
 * it is refused as soon as the bytes read pass the limit. Needs no Astro environment.
 */
export async function readCapped(request: Request, limit: number, tooLarge: () => AppError): Promise<Uint8Array<ArrayBuffer>> {
  const declared = request.headers.get('content-length');
  if (declared !== null && Number(declared) > limit) {
    void request.body?.cancel().catch(() => {}); // not awaited: the stream may never end
    throw tooLarge();
  }
  if (!request.body) return new Uint8Array();
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > limit) {
      void reader.cancel().catch(() => {}); // not awaited: the stream may never end
      throw tooLarge();
    }
    chunks.push(value);
  }
  const body = new Uint8Array(total);
  let at = 0;
  for (const chunk of chunks) {
    body.set(chunk, at);
    at += chunk.byteLength;
  }
  return body;
}
