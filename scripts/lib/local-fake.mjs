// What every local fake (mail catcher, payments fake) checks first. Node built-ins only.
import { timingSafeEqual } from 'node:crypto';

/** The header that carries LOCAL_FAKES_TOKEN to a fake's protected endpoints. */
export const localTokenHeader = 'x-local-token';

/**
 * Why a request may not be served, or null. A fake listens on loopback only, but a web page can
 * still reach it through a host name of its own that resolves to 127.0.0.1 (DNS rebinding): so the
 * Host header must name this machine and this port. Endpoints that read or change what the fake
 * keeps (`needsToken`) also need LOCAL_FAKES_TOKEN, which `npm start` and `npm test` give the app,
 * the fakes and the tests, and nobody else.
 * @param {import('node:http').IncomingMessage} req
 * @param {{ port: number; token: string | undefined; needsToken: boolean }} options
 * @returns {{ status: number; message: string } | null}
 */
export function localRequestProblem(req, { port, token, needsToken }) {
  const host = (req.headers.host ?? '').toLowerCase();
  if (![`127.0.0.1:${port}`, `localhost:${port}`, `[::1]:${port}`].includes(host)) {
    return { status: 421, message: `This local fake answers only requests addressed to 127.0.0.1:${port}.` };
  }
  if (!needsToken) return null;
  const given = req.headers[localTokenHeader];
  if (!token || typeof given !== 'string') return { status: 401, message: `Send the local token (LOCAL_FAKES_TOKEN) in the ${localTokenHeader} header.` };
  const a = Buffer.from(given);
  const b = Buffer.from(token);
  return a.length === b.length && timingSafeEqual(a, b) ? null : { status: 401, message: 'The local token does not match.' };
}
