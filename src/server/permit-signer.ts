import { generateKeyPairSync, type KeyObject } from 'node:crypto';
import type { JSONWebKeySet } from 'jose';
import { PERMIT_SIGNING_KEY, TALLYWOOD_LOCAL_MODE } from 'astro:env/server';
import { signPermitStatement, type PermitStatement } from '../lib/permit-statement';
import { parseSigningKey, publicJwkOf } from './signing-key';
import { log } from './log';

/**
 * The key that signs permit cards, from PERMIT_SIGNING_KEY. A deployment refuses to start without it
 * (src/server/deployment.ts); `npm start` and `npm test` make one and keep it in .local/. A local-mode
 * server started some other way (a bench, a single spec) signs with a key of its own that lasts as long
 * as the process, so its cards stop verifying when it stops.
 */
type Signer = { key: KeyObject; jwk: Awaited<ReturnType<typeof publicJwkOf>> };

let signer: Promise<Signer> | null = null;

function loadSigner(): Promise<Signer> {
  signer ??= (async () => {
    let key: KeyObject;
    if (PERMIT_SIGNING_KEY) key = parseSigningKey(PERMIT_SIGNING_KEY);
    else if (TALLYWOOD_LOCAL_MODE) {
      log.warn('PERMIT_SIGNING_KEY is not set: permit cards are signed with a key that lasts until this server stops.');
      key = generateKeyPairSync('ed25519').privateKey;
    } else throw new Error('PERMIT_SIGNING_KEY is not set');
    return { key, jwk: await publicJwkOf(key) };
  })();
  return signer;
}

/** The statement signed, as the compact JWS a card's QR code carries. */
export async function signCardStatement(statement: PermitStatement): Promise<string> {
  const { key, jwk } = await loadSigner();
  return signPermitStatement(statement, { key, kid: jwk.kid });
}

/** The public keys that verify permit cards (a JWKS, RFC 7517 §5): published, and carried by the verify page. */
export async function publishedPermitKeys(): Promise<JSONWebKeySet> {
  const { jwk } = await loadSigner();
  return { keys: [jwk] };
}
