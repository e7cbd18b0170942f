import { endpoint, json } from '../../server/http';
import { publishedPermitKeys } from '../../server/permit-signer';

/** The public keys that verify permit cards' statements, as a JWKS (RFC 7517 §5). */
export const GET = endpoint(async () => json(await publishedPermitKeys(), 200, { 'cache-control': 'public, max-age=3600' }));
