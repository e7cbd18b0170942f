// Which forwarded headers a request may keep. Node built-ins only (scripts/serve.mjs runs it before Astro).
import { isIP } from 'node:net';

/** The headers by which a proxy tells who the client is and how it was reached. */
export const forwardingHeaders = ['forwarded', 'x-forwarded-for', 'x-forwarded-host', 'x-forwarded-proto', 'x-forwarded-port', 'x-forwarded-prefix', 'x-real-ip'];

/** An IPv4 address written the IPv6 way (::ffff:127.0.0.1) is the IPv4 address. */
export const plainAddress = (address = '') => (address.startsWith('::ffff:') && isIP(address.slice(7)) === 4 ? address.slice(7) : address);

/** TRUSTED_PROXIES ("10.0.0.2, 10.0.0.3") as a set of plain addresses. */
export function parseTrustedProxies(value = '') {
  return new Set(value.split(',').map((a) => plainAddress(a.trim())).filter(Boolean));
}

/**
 * Set by the launcher (never by a client: one sent is replaced) on a request that came with any
 * forwarding header: somebody relayed it, so it is not a request made on this machine whatever
 * address it names. The local mailbox refuses such requests.
 */
export const relayedHeader = 'x-tallywood-relayed';

/**
 * Changes `headers` (a Node request's) in place to what the app may believe. From a peer that is not
 * a trusted proxy every forwarding header goes, so the app sees the socket's own address, scheme and
 * host. From a trusted proxy X-Forwarded-For keeps only its last entry: the address the proxy saw
 * (earlier entries were written by the client and prove nothing).
 * @param {Record<string, string | string[] | undefined>} headers
 * @param {string | undefined} peer the socket's remote address
 * @param {Set<string>} trusted
 */
export function trustedHeaders(headers, peer, trusted) {
  const relayed = forwardingHeaders.some((name) => headers[name] !== undefined);
  if (relayed) headers[relayedHeader] = '1';
  else delete headers[relayedHeader];
  if (!trusted.has(plainAddress(peer))) {
    for (const name of forwardingHeaders) delete headers[name];
    return headers;
  }
  const chain = [headers['x-forwarded-for'] ?? []].flat().join(',').split(',').map((a) => a.trim()).filter(Boolean);
  const last = chain.at(-1);
  if (last && isIP(plainAddress(last))) headers['x-forwarded-for'] = plainAddress(last);
  else delete headers['x-forwarded-for'];
  return headers;
}
