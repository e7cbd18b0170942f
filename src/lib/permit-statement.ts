import { CompactSign, compactVerify, createLocalJWKSet, decodeProtectedHeader, type CryptoKey, type JSONWebKeySet, type KeyObject } from 'jose';
import { z } from 'zod';

/**
 * The signed statement behind a permit card's QR code: a compact JWS (RFC 7515) signed with
 * Ed25519 (alg EdDSA, RFC 8037), so a warden's phone can tell with Tallywood's public key alone,
 * with no network, that Tallywood issued it and what it says. Small on purpose: it travels in a QR
 * code that must scan from a phone screen. Runs on the server and in the browser (jose, WebCrypto).
 */

/** A statement's `typ` header, so no other token signed with the key can pass for one (RFC 8725 §3.11). */
export const statementType = 'permit';

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/);

export const permitStatementSchema = z.object({
  /** The permit's id. */
  permit: z.uuid(),
  /** The forager's name, or the club's. */
  holder: z.string().min(1).max(200),
  /** Present and true when the holder is a club (the permit covers its members). */
  club: z.literal(true).optional(),
  parcel: z.string().min(1).max(200),
  /** The parcel's IANA zone: the dates are days on its calendar. */
  tz: z.string().min(1).max(64),
  from: isoDate,
  to: isoDate,
  /** One line per allowed species with its limits, in words; the card itself has the full rules. */
  species: z.array(z.string().max(300)).max(40),
  /** Issued at, in seconds since the epoch (as JWT's `iat`, RFC 7519 §4.1.6). */
  iat: z.number().int().nonnegative(),
});

export type PermitStatement = z.infer<typeof permitStatementSchema>;

export type SigningKey = CryptoKey | KeyObject | Uint8Array;

/** Signs a statement with an Ed25519 private key; `kid` names the key so a verifier picks the right public one. */
export async function signPermitStatement(statement: PermitStatement, { key, kid }: { key: SigningKey; kid: string }): Promise<string> {
  const payload = new TextEncoder().encode(JSON.stringify(permitStatementSchema.parse(statement)));
  return new CompactSign(payload).setProtectedHeader({ alg: 'EdDSA', kid, typ: statementType }).sign(key);
}

export type Verified =
  | { ok: true; statement: PermitStatement; kid: string }
  | { ok: false; reason: 'malformed' | 'unknown-key' | 'bad-signature' | 'not-a-statement' };

/** What each failure means, said to the person checking a card. */
export const verifyFailureWords: Record<Exclude<Verified, { ok: true }>['reason'], string> = {
  malformed: 'This is not a permit code. Paste the whole code from the card, or the link its QR code opens.',
  'unknown-key': 'This code names a key Tallywood does not publish: it was not signed by Tallywood.',
  'bad-signature': 'The signature does not match: this code was not signed by Tallywood, or it was changed after it was signed.',
  'not-a-statement': 'This code is signed, but it is not a permit statement.',
};

/** The token in a pasted text: a bare code, or a link whose fragment (after #) or `token` parameter holds it. */
export function tokenFrom(text: string): string {
  const trimmed = text.trim();
  const hash = trimmed.indexOf('#');
  if (hash >= 0) return trimmed.slice(hash + 1).trim();
  const query = /[?&]token=([^&\s]+)/.exec(trimmed);
  return query?.[1] ? decodeURIComponent(query[1]) : trimmed;
}

const compactPattern = /^[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+$/;

/** Checks a statement against the published keys (a JWKS, RFC 7517 §5). Never throws. */
export async function verifyPermitStatement(token: string, keys: JSONWebKeySet): Promise<Verified> {
  if (token.length > 4096 || !compactPattern.test(token)) return { ok: false, reason: 'malformed' };
  let kid: string | undefined;
  try {
    const header = decodeProtectedHeader(token);
    if (header.alg !== 'EdDSA' || typeof header.kid !== 'string') return { ok: false, reason: 'malformed' };
    kid = header.kid;
  } catch {
    return { ok: false, reason: 'malformed' };
  }
  if (!keys.keys.some((k) => k.kid === kid)) return { ok: false, reason: 'unknown-key' };
  let payload: Uint8Array;
  let typ: unknown;
  try {
    const verified = await compactVerify(token, createLocalJWKSet(keys), { algorithms: ['EdDSA'] });
    payload = verified.payload;
    typ = verified.protectedHeader.typ;
  } catch {
    return { ok: false, reason: 'bad-signature' };
  }
  if (typ !== statementType) return { ok: false, reason: 'not-a-statement' };
  try {
    const parsed = permitStatementSchema.safeParse(JSON.parse(new TextDecoder().decode(payload)));
    return parsed.success ? { ok: true, statement: parsed.data, kid } : { ok: false, reason: 'not-a-statement' };
  } catch {
    return { ok: false, reason: 'not-a-statement' };
  }
}
