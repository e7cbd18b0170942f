import { createPrivateKey, createPublicKey, type JsonWebKey, type KeyObject } from 'node:crypto';
import { calculateJwkThumbprint, type JWK } from 'jose';

/**
 * The Ed25519 key that signs permit statements (src/lib/permit-statement.ts), as PERMIT_SIGNING_KEY
 * gives it: a PKCS8 PEM (`openssl genpkey -algorithm ed25519`; its line breaks may be written as
 * "\n"), or a private JWK (RFC 8037 §2: kty OKP, crv Ed25519, with d).
 */
export function parseSigningKey(text: string): KeyObject {
  const value = text.trim();
  let key: KeyObject;
  if (value.startsWith('{')) {
    let jwk: JsonWebKey;
    try {
      jwk = JSON.parse(value) as JsonWebKey;
    } catch {
      throw new Error('PERMIT_SIGNING_KEY looks like a JWK but is not JSON.');
    }
    key = createPrivateKey({ key: jwk, format: 'jwk' });
  } else {
    key = createPrivateKey(value.replace(/\\n/g, '\n'));
  }
  if (key.asymmetricKeyType !== 'ed25519') throw new Error(`PERMIT_SIGNING_KEY must be an Ed25519 private key; this one is ${key.asymmetricKeyType ?? 'of another kind'}.`);
  return key;
}

/** What is wrong with a configured key, as a sentence saying what to set; null when it can sign. */
export function signingKeyProblem(text: string): string | null {
  try {
    parseSigningKey(text);
    return null;
  } catch (error) {
    const reason = error instanceof Error && error.message.startsWith('PERMIT_SIGNING_KEY') ? error.message : 'PERMIT_SIGNING_KEY could not be read as a key.';
    return `${reason} Make one with: openssl genpkey -algorithm ed25519 (a PKCS8 PEM), and keep it the same on every instance.`;
  }
}

/**
 * The public half as a JWK for the published key set, with its `kid`: the first 16 characters of its
 * RFC 7638 thumbprint (short, since the statement travels in a QR code; unique enough among our keys).
 */
export async function publicJwkOf(privateKey: KeyObject): Promise<JWK & { kid: string }> {
  const exported = createPublicKey(privateKey).export({ format: 'jwk' }) as JWK;
  const jwk = { kty: exported.kty, crv: exported.crv, x: exported.x } as JWK;
  const kid = (await calculateJwkThumbprint(jwk, 'sha256')).slice(0, 16);
  return { ...jwk, kid, alg: 'EdDSA', use: 'sig' };
}
