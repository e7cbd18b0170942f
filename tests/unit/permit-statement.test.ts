import { createPublicKey, verify as nodeVerify } from 'node:crypto';
import { CompactSign, calculateJwkThumbprint, compactVerify, exportJWK, generateKeyPair, importJWK } from 'jose';
import QRCode from 'qrcode';
import { describe, expect, it } from 'vitest';
import type { AllowanceFacts } from '../../src/lib/field/types';
import { permitStatement, statementPayloadBudget } from '../../src/lib/permit-card';
import { permitStanding } from '../../src/lib/permit-states';
import { signPermitStatement, tokenFrom, verifyPermitStatement, type PermitStatement } from '../../src/lib/permit-statement';

/** A key pair made here with jose (WebCrypto's Ed25519), and its public half as a one-key JWKS. */
async function keyPair(kid: string) {
  const { privateKey, publicKey } = await generateKeyPair('EdDSA', { crv: 'Ed25519', extractable: true });
  const jwk = { ...(await exportJWK(publicKey)), kid, alg: 'EdDSA' };
  return { privateKey, jwk, keys: { keys: [jwk] } };
}

const statement: PermitStatement = {
  permit: '6f1c2f7e-3a44-4d2b-9a55-0c8e2b7d9f10',
  holder: 'Owen Tamsin',
  parcel: 'Cobble Ridge Lot',
  tz: 'America/New_York',
  from: '2026-04-01',
  to: '2027-03-31',
  species: ['Chaga: 500 g a visit, 1.5 kg a season'],
  iat: 1_764_633_600,
};

const segments = (token: string) => token.split('.') as [string, string, string];
const b64 = (text: string) => Buffer.from(text).toString('base64url');

describe('permit statements (compact JWS, EdDSA over Ed25519)', () => {
  it('given a statement signed with a key, it verifies with the public half and reads back as signed', async () => {
    const { privateKey, keys } = await keyPair('card-key-1');
    const token = await signPermitStatement(statement, { key: privateKey, kid: 'card-key-1' });
    expect(await verifyPermitStatement(token, keys)).toEqual({ ok: true, statement, kid: 'card-key-1' });
    // The protected header, read without our code: RFC 7515 §7.1 compact form, RFC 8037 §3.1 alg.
    expect(JSON.parse(Buffer.from(segments(token)[0], 'base64url').toString())).toEqual({ alg: 'EdDSA', kid: 'card-key-1', typ: 'permit' });
  });

  it('given a payload changed after signing (a later last day), it fails as a bad signature', async () => {
    const { privateKey, keys } = await keyPair('k');
    const [header, , signature] = segments(await signPermitStatement(statement, { key: privateKey, kid: 'k' }));
    const tampered = `${header}.${b64(JSON.stringify({ ...statement, to: '2099-12-31' }))}.${signature}`;
    expect(await verifyPermitStatement(tampered, keys)).toEqual({ ok: false, reason: 'bad-signature' });
  });

  it('given a statement signed by another key under the same kid, it fails; under a kid not published, it says the key is unknown', async () => {
    const ours = await keyPair('ours');
    const theirs = await keyPair('theirs');
    expect(await verifyPermitStatement(await signPermitStatement(statement, { key: theirs.privateKey, kid: 'ours' }), ours.keys)).toEqual({ ok: false, reason: 'bad-signature' });
    expect(await verifyPermitStatement(await signPermitStatement(statement, { key: theirs.privateKey, kid: 'theirs' }), ours.keys)).toEqual({ ok: false, reason: 'unknown-key' });
  });

  it("given a signed token, Node's own crypto.verify for Ed25519 accepts its signature over the signing input, and refuses it over a changed one (RFC 7515 §5.2, RFC 8037 §3.1)", async () => {
    const { privateKey, jwk } = await keyPair('k');
    const [header, payload, signature] = segments(await signPermitStatement(statement, { key: privateKey, kid: 'k' }));
    const publicKey = createPublicKey({ key: { kty: 'OKP', crv: 'Ed25519', x: jwk.x as string }, format: 'jwk' });
    expect(nodeVerify(null, Buffer.from(`${header}.${payload}`), publicKey, Buffer.from(signature, 'base64url'))).toBe(true);
    expect(nodeVerify(null, Buffer.from(`${header}.${b64('{}')}`), publicKey, Buffer.from(signature, 'base64url'))).toBe(false);
  });

  it('given the example JWS of RFC 8037 Appendix A.4, Node and jose both accept it with the key of A.1 (the values quoted from memory; Node, jose and the A.3 thumbprint all agreeing confirms them)', async () => {
    const key = { kty: 'OKP', crv: 'Ed25519', x: '11qYAYKxCrfVS_7TyWQHOg7hcvPapiMlrwIaaPcHURo' };
    const jws = 'eyJhbGciOiJFZERTQSJ9.RXhhbXBsZSBvZiBFZDI1NTE5IHNpZ25pbmc.hgyY0il_MGCjP0JzlnLWG1PPOt7-09PGcvMg3AIbQR6dWbhijcNR4ki4iylGjg5BhVsPt9g7sVvpAr_MuM0KAg';
    const [header, payload, signature] = segments(jws);
    expect(nodeVerify(null, Buffer.from(`${header}.${payload}`), createPublicKey({ key, format: 'jwk' }), Buffer.from(signature, 'base64url'))).toBe(true);
    const verified = await compactVerify(jws, await importJWK(key, 'EdDSA'));
    expect(new TextDecoder().decode(verified.payload)).toBe('Example of Ed25519 signing');
    // RFC 8037 A.3: the key's RFC 7638 thumbprint.
    expect(await calculateJwkThumbprint(key, 'sha256')).toBe('kPrK_qmxVWaYVA9wwBF6Iuo3vVzz7TxHCTwXBygrS4k');
  });

  it('given something that is not a compact JWS, or a signed token of another type, it says so without throwing', async () => {
    const { privateKey, keys } = await keyPair('k');
    expect(await verifyPermitStatement('hello', keys)).toEqual({ ok: false, reason: 'malformed' });
    expect(await verifyPermitStatement('a.b.c', keys)).toEqual({ ok: false, reason: 'malformed' });
    const otherType = await new CompactSign(new TextEncoder().encode(JSON.stringify(statement))).setProtectedHeader({ alg: 'EdDSA', kid: 'k', typ: 'JWT' }).sign(privateKey);
    expect(await verifyPermitStatement(otherType, keys)).toEqual({ ok: false, reason: 'not-a-statement' });
  });

  it('given a pasted link, it finds the code after # or in ?token=, and a bare code as it is', () => {
    expect(tokenFrom(' https://tallywood.example.org/verify#aa.bb.cc ')).toBe('aa.bb.cc');
    expect(tokenFrom('https://tallywood.example.org/api/permits/status?token=aa.bb.cc&x=1')).toBe('aa.bb.cc');
    expect(tokenFrom('aa.bb.cc')).toBe('aa.bb.cc');
  });
});

/** An allowance with limits as PostgreSQL returns them (trim_scale drops trailing zeros; 1.500000 is what numeric(18,6) holds). */
const allowance = (commonName: string, limits: AllowanceFacts['limits']): AllowanceFacts => ({
  speciesId: commonName, commonName, scientificName: '', seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut'], limits, cautions: [], lookalikes: [],
});

describe('permitStatement', () => {
  const permit = { id: statement.permit, holderUserId: 'u1', holderClubId: null };
  const facts = { permit, holder: 'Owen Tamsin', parcel: 'Cobble Ridge Lot', timeZone: 'America/New_York', startsOn: '2026-04-01', endsOn: '2027-03-31' };

  it('given limits of the parcel and a tighter one of the permit, it writes them in words, the tighter one in force', () => {
    const s = permitStatement({ ...facts, allowances: [allowance('Chaga', [
      { scope: 'visit', quantity: '500', unit: 'g', permitId: null },
      { scope: 'season', quantity: '1.5', unit: 'kg', permitId: null },
      { scope: 'season', quantity: '1', unit: 'kg', permitId: permit.id },
      { scope: 'club-season', quantity: '9', unit: 'kg', permitId: 'another-permit' },
    ])] }, new Date('2026-12-02T16:00:00Z'));
    expect(s.species).toEqual(['Chaga: 500 g a visit, 1 kg a season']);
    expect(s.iat).toBe(1_796_227_200); // 2026-12-02T16:00:00Z in seconds since 1970 (date -d @1764691200 -u)
  });

  it('given a parcel with many species, it keeps the payload within its budget and the QR code at version 22 or below at level M', async () => {
    const many = Array.from({ length: 14 }, (_, i) => allowance(`Species with a long common name ${i}`, [
      { scope: 'visit', quantity: '500', unit: 'g', permitId: null }, { scope: 'day', quantity: '2', unit: 'us-quart', permitId: null }, { scope: 'season', quantity: '3', unit: 'kg', permitId: null },
    ]));
    const s = permitStatement({ ...facts, allowances: many }, new Date('2026-12-02T16:00:00Z'));
    expect(Buffer.byteLength(JSON.stringify(s))).toBeLessThanOrEqual(statementPayloadBudget);
    expect(s.species.at(-1)).toMatch(/^and \d+ more \(see the card\)$/);
    const { privateKey } = await keyPair('0123456789abcdef');
    const token = await signPermitStatement(s, { key: privateKey, kid: '0123456789abcdef' });
    // ISO/IEC 18004: version 22 is 105 modules a side.
    expect(QRCode.create(`https://tallywood.example.org/verify#${token}`, { errorCorrectionLevel: 'M' }).version).toBeLessThanOrEqual(22);
  });
});

describe('permitStanding', () => {
  it('given a revoked permit, it says since the day of the revocation; an active one past its last day, expired', () => {
    expect(permitStanding({ state: 'revoked', endsOn: '2027-03-31', revokedOn: '2026-12-02' }, '2026-12-03')).toEqual({ state: 'revoked', since: '2026-12-02' });
    expect(permitStanding({ state: 'active', endsOn: '2026-12-02', revokedOn: null }, '2026-12-03')).toEqual({ state: 'expired', lastDay: '2026-12-02' });
    expect(permitStanding({ state: 'active', endsOn: '2026-12-02', revokedOn: null }, '2026-12-02')).toEqual({ state: 'active', lastDay: '2026-12-02' });
  });
});
