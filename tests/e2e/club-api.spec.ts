import { randomUUID } from 'node:crypto';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, mailFor } from './support';

/*
 * The stewardship endpoints against the running app: who may read a club's audit, flags and entries,
 * a parcel's audit, flags and season report, and who may answer or manage a membership. Someone
 * else's club, parcel, flag or membership answers 404 as if it did not exist; a role that never
 * may answers 403 (the permission table, src/lib/permissions.ts).
 *
 * Demo people (data/demo/people.csv, clubs.json): Marisol Kent (steward@) stewards the one demo
 * club, Three Ridges Foraging Society; Beth Lindqvist is a member of it; Owen Marsh (forager@)
 * stewards nothing; Walter Pelletier (landowner@) and June Farrand are landowners of their own parcels.
 *
 * Walter makes a parcel of his own for this file, clear of the demo valley and of the other specs'
 * parcels, with an oyster-mushroom allowance (1 kg a day) and a club permit with a 2 kg club-wide
 * cap; Beth takes 850 g there. Worked by hand: 850 g = 0.85 kg, of 1 kg 85 % — at or past the 80 %
 * threshold, so nearing (GLOSSARY.md "tally states"), which raises a flag; of the 2 kg cap, 42.5 %.
 */
const west = -72.97;
const south = 43.87;
const size = 0.003;
const centre = { longitude: west + size / 2, latitude: south + size / 2 };
const clubName = 'Three Ridges Foraging Society';
const csvHeader = 'section,species,scientific_name,season_start,season_end,scope,measure,limit,unit,used,percent,state,forager,date,follow_up';

let steward: APIRequestContext;
let beth: APIRequestContext;
let owen: APIRequestContext;
let walter: APIRequestContext;
let june: APIRequestContext;
const ids = { club: '', beth: '', parcel: '', parcelName: '', oyster: '', permit: '', entry: '', flag: '', juneParcel: '' };

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  [steward, beth, owen, walter, june] = await Promise.all(
    ['steward@example.org', 'beth.lindqvist@example.org', 'forager@example.org', 'landowner@example.org', 'june.farrand@example.org'].map(apiAs),
  );
  const me = await (await steward.get('/api/me')).json();
  // The demo has one club, and Marisol stewards it.
  expect(me.stewardOfClubIds).toHaveLength(1);
  ids.club = me.stewardOfClubIds[0];
  const bethMe = await (await beth.get('/api/me')).json();
  expect(bethMe.memberOfClubIds).toContain(ids.club);
  expect(bethMe.stewardOfClubIds).toEqual([]);
  ids.beth = bethMe.id;

  const juneParcels = (await (await june.get('/api/parcels')).json()).parcels as { id: string }[];
  expect(juneParcels.length).toBeGreaterThan(0);
  ids.juneParcel = juneParcels[0]?.id ?? '';

  ids.parcelName = `Club API lot ${Date.now()}`;
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: ids.parcelName, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  ids.parcel = (await created.json()).parcel.id;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  ids.oyster = species.find((s) => s.commonName === 'Oyster mushroom')?.id ?? '';
  expect(ids.oyster).not.toBe('');
  const allowed = await walter.put(`/api/parcels/${ids.parcel}/allowances`, { data: { speciesId: ids.oyster, seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut', 'pick'], limits: [{ scope: 'day', quantity: '1', unit: 'kg' }] } });
  expect(allowed.status(), await allowed.text()).toBe(200);
  const granted = await walter.post(`/api/parcels/${ids.parcel}/permits`, {
    data: { holder: { kind: 'club', clubId: ids.club }, startsOn: '2020-01-01', endsOn: '2099-12-31', limits: [{ speciesId: ids.oyster, scope: 'club-season', quantity: '2', unit: 'kg' }] },
  });
  expect(granted.status(), await granted.text()).toBe(201);
  const { permit } = await granted.json();
  expect(permit.state).toBe('active');
  ids.permit = permit.id;

  const checkIn = await beth.post('/api/check-ins', { data: { ...centre, accuracyM: 5 } });
  expect(checkIn.status(), await checkIn.text()).toBe(200);
  const answer = await checkIn.json();
  expect(answer.verdict).toBe('clear');
  expect(answer.permitId).toBe(ids.permit);
  const saved = await beth.post('/api/harvest-entries', { data: { idempotencyKey: randomUUID(), visitId: answer.visitId, speciesId: ids.oyster, method: 'pick', quantities: [{ quantity: '850', unit: 'g' }] } });
  expect(saved.status(), await saved.text()).toBe(201);
  const recorded = await saved.json();
  ids.entry = recorded.entry.id;
  expect(recorded.tallies.find((t: { scope: string }) => t.scope === 'day')).toMatchObject({ used: '0.85', percent: 85, state: 'nearing' });
});

test.afterAll(async () => Promise.all([steward, beth, owen, walter, june].map((c) => c?.dispose())));

/** One audit row is one forager's on a parcel and species (under any permit): the entries behind it are asked for by those three. */
const entriesQuery = () => new URLSearchParams({ parcelId: ids.parcel, speciesId: ids.oyster, foragerId: ids.beth }).toString();

test.describe('club audit, flags and entries', () => {
  test("given the club's steward, its audit, flags and entries answer 200, and the entries carry no position", async () => {
    const audit = await steward.get(`/api/clubs/${ids.club}/audit`);
    expect(audit.status(), await audit.text()).toBe(200);
    type Row = { parcelId: string; foragerId: string; permitId: string; permitIds: string[]; taken: { measure: string; base: string }[]; tallies: { scope: string; measure: string; used: string; percent: number; state: string }[] };
    const { rows } = (await audit.json()) as { rows: Row[] };
    // One row per forager on a parcel and species, whatever permits they took it under.
    const mine = rows.filter((r) => r.parcelId === ids.parcel && r.foragerId === ids.beth);
    expect(mine).toHaveLength(1);
    const [row] = mine;
    expect(row?.permitId).toBe(ids.permit);
    expect(row?.permitIds).toEqual([ids.permit]);
    expect(row?.taken).toEqual([{ measure: 'mass', base: '850' }]);
    // 850 g of 1 kg a day: 0.85 kg, 85 %, nearing; of the 2 kg club cap: 0.85 kg, 42.5 %, within.
    expect(row?.tallies.map((t) => [t.scope, t.measure, t.used, t.percent, t.state])).toEqual([['day', 'mass', '0.85', 85, 'nearing'], ['club-season', 'mass', '0.85', 42.5, 'within']]);

    const flags = await steward.get(`/api/clubs/${ids.club}/flags`);
    expect(flags.status()).toBe(200);
    const flag = ((await flags.json()).flags as { id: string; kind: string; scopes: string[]; worstState: string; entry: { id: string }; handled: boolean }[]).find((f) => f.entry.id === ids.entry);
    expect(flag).toMatchObject({ kind: 'nearing', scopes: ['day'], worstState: 'nearing', handled: false });
    ids.flag = flag?.id ?? '';

    const entries = await steward.get(`/api/clubs/${ids.club}/audit/entries?${entriesQuery()}`);
    expect(entries.status(), await entries.text()).toBe(200);
    const list = (await entries.json()).entries as { id: string; position: unknown }[];
    expect(list.map((e) => [e.id, e.position])).toEqual([[ids.entry, null]]);
  });

  test('given a forager, a member or a landowner who stewards nothing, the club audit, flags and entries answer 403', async () => {
    for (const who of [owen, beth, walter]) {
      for (const path of [`/api/clubs/${ids.club}/audit`, `/api/clubs/${ids.club}/flags`, `/api/clubs/${ids.club}/audit/entries?${entriesQuery()}`]) {
        const response = await who.get(path);
        expect(response.status(), path).toBe(403);
        expect((await response.json()).error.code).toBe('forbidden');
      }
    }
  });

  test("given a steward asking for another club's id, it answers 404", async () => {
    // The demo has one club only: an id that names no club stands for another club's.
    const other = randomUUID();
    for (const path of [`/api/clubs/${other}/audit`, `/api/clubs/${other}/flags`, `/api/clubs/${other}/audit/entries?${entriesQuery()}`, '/api/clubs/not-a-uuid/audit']) {
      const response = await steward.get(path);
      expect(response.status(), path).toBe(404);
      expect((await response.json()).error.code).toBe('not-found');
    }
  });

  test('given no session, the club audit answers 401', async ({ request }) => {
    expect((await request.get(`/api/clubs/${ids.club}/audit`)).status()).toBe(401);
  });

  test('given entries asked for without a parcel, it answers 400 naming parcelId', async () => {
    const response = await steward.get(`/api/clubs/${ids.club}/audit/entries?speciesId=${ids.oyster}&foragerId=${ids.beth}`);
    expect(response.status()).toBe(400);
    expect((await response.json()).error.field).toBe('parcelId');
  });
});

test.describe("a parcel's audit, flags and season report", () => {
  test('given the landowner, the audit, flags and entries of the parcel answer 200, with the position of each entry', async () => {
    const audit = await walter.get(`/api/parcels/${ids.parcel}/audit`);
    expect(audit.status(), await audit.text()).toBe(200);
    expect(((await audit.json()).rows as { foragerId: string }[]).map((r) => r.foragerId)).toEqual([ids.beth]);
    const flags = await walter.get(`/api/parcels/${ids.parcel}/flags`);
    expect(flags.status()).toBe(200);
    expect(((await flags.json()).flags as { id: string }[]).map((f) => f.id)).toEqual([ids.flag]);
    const entries = await walter.get(`/api/parcels/${ids.parcel}/audit/entries?${entriesQuery()}`);
    expect(entries.status(), await entries.text()).toBe(200);
    const [only] = (await entries.json()).entries as { id: string; position: [number, number] }[];
    expect(only?.id).toBe(ids.entry);
    // [longitude, latitude] (RFC 7946 §3.1.1): where Beth checked in.
    expect(only?.position[0]).toBeCloseTo(centre.longitude, 9);
    expect(only?.position[1]).toBeCloseTo(centre.latitude, 9);
  });

  test("given the landowner asking for entries of another parcel through this one's path, it answers 404", async () => {
    const query = new URLSearchParams({ parcelId: ids.juneParcel, speciesId: ids.oyster, foragerId: ids.beth }).toString();
    expect((await walter.get(`/api/parcels/${ids.parcel}/audit/entries?${query}`)).status()).toBe(404);
  });

  test("given another landowner, someone else's parcel audit, entries, flags, season report, CSV and send answer 404", async () => {
    const base = `/api/parcels/${ids.parcel}`;
    for (const path of [`${base}/audit`, `${base}/audit/entries?${entriesQuery()}`, `${base}/flags`, `${base}/season-report`, `${base}/season-report/csv`]) {
      const response = await june.get(path);
      expect(response.status(), path).toBe(404);
      expect((await response.json()).error.code).toBe('not-found');
    }
    const sent = await june.post(`${base}/season-report/send`, { data: {} });
    expect(sent.status()).toBe(404);
    // And the other way round: Walter on June's parcel.
    for (const path of [`/api/parcels/${ids.juneParcel}/audit`, `/api/parcels/${ids.juneParcel}/flags`, `/api/parcels/${ids.juneParcel}/season-report`]) {
      expect((await walter.get(path)).status(), path).toBe(404);
    }
  });

  test('given a forager who owns no land, the parcel audit answers 403 and the season report 404', async () => {
    expect((await owen.get(`/api/parcels/${ids.parcel}/audit`)).status()).toBe(403);
    expect((await owen.get(`/api/parcels/${ids.parcel}/season-report`)).status()).toBe(404);
    expect((await owen.get(`/api/parcels/${ids.parcel}/season-report?club=${ids.club}`)).status()).toBe(404);
  });

  test('given the landowner, the season report CSV is text/csv with its header line and a tally record per limit (RFC 4180 §2, §3)', async () => {
    const response = await walter.get(`/api/parcels/${ids.parcel}/season-report/csv`);
    expect(response.status()).toBe(200);
    expect(response.headers()['content-type']).toMatch(/^text\/csv/);
    expect(response.headers()['content-disposition']).toMatch(/^attachment; filename="season-report-club-api-lot-\d+-\d{4}-\d{2}-\d{2}\.csv"$/);
    const lines = (await response.text()).split('\r\n');
    expect(lines[0]).toBe(csvHeader);
    // scope, measure, limit, unit, used, percent, state: 850 g of a 1 kg day limit is 0.85 kg, 85 %, nearing (worked above).
    expect(lines.find((l) => l.startsWith('tally,Oyster mushroom,') && l.includes(',day,'))).toMatch(/,day,mass,1,kg,0\.85,85,nearing,,,$/);
  });

  test("given the club's steward, the parcel's season report answers 200 in the club's view, and 404 without naming the club", async () => {
    const report = await steward.get(`/api/parcels/${ids.parcel}/season-report?club=${ids.club}`);
    expect(report.status(), await report.text()).toBe(200);
    expect(await report.json()).toMatchObject({ parcel: { id: ids.parcel, name: ids.parcelName }, club: { id: ids.club, name: clubName }, foragers: 1 });
    const csv = await steward.get(`/api/parcels/${ids.parcel}/season-report/csv?club=${ids.club}`);
    expect(csv.status()).toBe(200);
    expect((await csv.text()).split('\r\n')[0]).toBe(csvHeader);
    expect((await steward.get(`/api/parcels/${ids.parcel}/season-report`)).status()).toBe(404);
    expect((await steward.get(`/api/parcels/${ids.parcel}/season-report?club=${randomUUID()}`)).status()).toBe(404);
  });

  test("given the club's steward sending the report (five clicks at once), the landowner and the steward get it by e-mail once", async () => {
    const send = () => steward.post(`/api/parcels/${ids.parcel}/season-report/send`, { data: { clubId: ids.club } });
    const answers = await Promise.all(Array.from({ length: 5 }, send));
    const sent = answers.filter((a) => a.status() === 200);
    expect(sent, 'exactly one send goes through').toHaveLength(1);
    expect(((await sent[0]?.json()).sentTo as string[]).sort()).toEqual(['landowner@example.org', 'steward@example.org']);
    for (const refused of answers.filter((a) => a.status() !== 200)) {
      expect(refused.status()).toBe(429);
      expect((await refused.json()).error.message).toMatch(/less than a minute ago; it was not sent twice/);
      expect(Number(refused.headers()['retry-after'])).toBeGreaterThan(0);
    }
    const subject = `Season report for ${ids.parcelName} from ${clubName}`;
    const copies = async () => (await mailFor(walter, 'landowner@example.org')).filter((m) => m.subject === subject).length;
    await expect.poll(copies, { message: 'the season report e-mail' }).toBe(1);
    expect((await send()).status()).toBe(429);
    expect(await copies()).toBe(1);
  });
});

test.describe('flag notes', () => {
  test('given someone who does not see the flag, a note answers 404; so does an id that names no flag', async () => {
    for (const who of [june, owen, beth]) {
      const response = await who.post(`/api/flags/${ids.flag}/notes`, { data: { note: 'Looked into it.', handled: true } });
      expect(response.status()).toBe(404);
    }
    expect((await steward.post(`/api/flags/${randomUUID()}/notes`, { data: { note: 'Looked into it.', handled: true } })).status()).toBe(404);
    expect((await june.post(`/api/flags/${randomUUID()}/notes`, { data: { note: 'Looked into it.', handled: true } })).status()).toBe(404);
    expect((await steward.post('/api/flags/not-a-uuid/notes', { data: { note: 'Looked into it.', handled: true } })).status()).toBe(404);
  });

  test('given a blank note, it answers 400 naming the note', async () => {
    const response = await steward.post(`/api/flags/${ids.flag}/notes`, { data: { note: '   ', handled: true } });
    expect(response.status()).toBe(400);
    expect((await response.json()).error.field).toBe('note');
  });

  test("given the club's steward, a note marks the flag handled, and the landowner sees it", async () => {
    const posted = await steward.post(`/api/flags/${ids.flag}/notes`, { data: { note: 'Spoke with Beth: 150 g left for today.', handled: true } });
    expect(posted.status(), await posted.text()).toBe(201);
    const flags = (await (await walter.get(`/api/parcels/${ids.parcel}/flags`)).json()).flags as { id: string; handled: boolean; notes: { note: string; authorName: string }[] }[];
    const flag = flags.find((f) => f.id === ids.flag);
    expect(flag?.handled).toBe(true);
    expect(flag?.notes.map((n) => [n.note, n.authorName])).toEqual([['Spoke with Beth: 150 g left for today.', 'Marisol Kent']]);
    const reopened = await walter.post(`/api/flags/${ids.flag}/notes`, { data: { note: 'Reopened until I have weighed the bag.', handled: false } });
    expect(reopened.status()).toBe(201);
    const after = ((await (await steward.get(`/api/clubs/${ids.club}/flags`)).json()).flags as { id: string; handled: boolean }[]).find((f) => f.id === ids.flag);
    expect(after?.handled).toBe(false);
  });

  test("given the landowner's note sent to the member too, Beth gets it with the flag's facts and the answer names her; without the box, nobody is e-mailed", async () => {
    const subject = `A note about your Oyster mushroom entry on ${ids.parcelName}`;
    const notes = async () => (await mailFor(beth, 'beth.lindqvist@example.org')).filter((m) => m.subject === subject);
    const quiet = await walter.post(`/api/flags/${ids.flag}/notes`, { data: { note: 'Noted for the records.', handled: false } });
    expect(await quiet.json()).toMatchObject({ sentTo: null });
    const sent = await walter.post(`/api/flags/${ids.flag}/notes`, { data: { note: 'You are close to the day limit here; 150 g left.', handled: false, sendToMember: true } });
    expect(sent.status(), await sent.text()).toBe(201);
    expect(await sent.json()).toMatchObject({ sentTo: 'Beth Lindqvist' });
    await expect.poll(async () => (await notes()).length, { message: 'the note e-mailed to Beth' }).toBe(1);
    const [mail] = await notes();
    expect(mail?.text).toContain('Walter Pelletier, the landowner, wrote about your entry of 850 g of Oyster mushroom');
    expect(mail?.text).toContain('"You are close to the day limit here; 150 g left."');
    // 850 g of a 1 kg day limit, worked by hand in this file's header: 0.85 kg, 85 %, nearing.
    expect(mail?.text).toContain('0.85 kg of 1 kg a day (85 %), ◑ nearing');
    expect(mail?.text).not.toContain('Noted for the records.');
  });
});

test.describe('memberships', () => {
  test('given someone who stewards no club, posting an invitation answers 403', async () => {
    for (const who of [owen, beth]) {
      const response = await who.post(`/api/clubs/${ids.club}/members`, { data: { email: 'someone@example.org' } });
      expect(response.status()).toBe(403);
    }
  });

  test("given a steward inviting into another club's id, it answers 404", async () => {
    expect((await steward.post(`/api/clubs/${randomUUID()}/members`, { data: { email: 'someone@example.org' } })).status()).toBe(404);
  });

  test('given a bad e-mail address, the invitation answers 400 naming email', async () => {
    for (const email of ['not-an-address', '', 'two@@example.org']) {
      const response = await steward.post(`/api/clubs/${ids.club}/members`, { data: { email } });
      expect(response.status(), email).toBe(400);
      expect((await response.json()).error.field).toBe('email');
    }
  });

  test('given an active member, inviting them again answers 409 naming email', async () => {
    const response = await steward.post(`/api/clubs/${ids.club}/members`, { data: { email: 'beth.lindqvist@example.org' } });
    expect(response.status()).toBe(409);
    expect((await response.json()).error).toMatchObject({ code: 'already-member', field: 'email' });
  });

  test("given an invitation, answering it as someone else answers 404, and the steward may withdraw it", async () => {
    const email = `invitee-${Date.now()}@example.org`;
    const invited = await steward.post(`/api/clubs/${ids.club}/members`, { data: { email, role: 'member' } });
    expect(invited.status(), await invited.text()).toBe(201);
    const { membershipId, state } = await invited.json();
    expect(state).toBe('invited');
    for (const who of [owen, beth, steward]) {
      const response = await who.post(`/api/memberships/${membershipId}`, { data: { action: 'accept' } });
      expect(response.status()).toBe(404);
    }
    expect((await owen.post(`/api/memberships/${randomUUID()}`, { data: { action: 'leave' } })).status()).toBe(404);
    expect((await owen.post(`/api/memberships/${membershipId}`, { data: { action: 'join' } })).status()).toBe(400);
    expect((await owen.post(`/api/clubs/${ids.club}/members/${membershipId}`, { data: { action: 'remove' } })).status()).toBe(403);
    expect((await steward.post(`/api/clubs/${randomUUID()}/members/${membershipId}`, { data: { action: 'remove' } })).status()).toBe(404);
    const withdrawn = await steward.post(`/api/clubs/${ids.club}/members/${membershipId}`, { data: { action: 'remove' } });
    expect(withdrawn.status(), await withdrawn.text()).toBe(200);
  });
});
