import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, mailFor } from './support';

/**
 * The e-mails people expect from a landowner's decisions: an approval that states the fee and the
 * landowner's message, and limits made tighter on a permit someone holds. Each runs on a parcel of
 * its own, so the demo's parcels and the other specs' figures are untouched.
 */
const walterEmail = 'landowner@example.org';
const bethEmail = 'beth.lindqvist@example.org';
const stewardEmail = 'steward@example.org';
let walter: APIRequestContext;
let beth: APIRequestContext;
let steward: APIRequestContext;
let parcelId = '';
let clubId = '';
let chagaId = '';
const parcelName = `Notice test lot ${Date.now().toString(36)}`;

/** A small square north-west of the demo valley, clear of every demo parcel and of the other specs' test lots. */
const square = (west: number, south: number, size = 0.001) => ({
  type: 'Polygon' as const,
  coordinates: [[[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]]],
});

test.describe.configure({ mode: 'serial' });

/** A day on the parcel's calendar (America/New_York, IANA tz data) `days` from now: requests ask for dates to come, whenever the run is. */
const parcelDay = (days: number) =>
  new Intl.DateTimeFormat('en-CA', { timeZone: 'America/New_York', year: 'numeric', month: '2-digit', day: '2-digit' }).format(new Date(Date.now() + days * 86_400_000));

test.beforeAll(async () => {
  [walter, beth, steward] = await Promise.all([walterEmail, bethEmail, stewardEmail].map(apiAs));
  const created = await walter.post('/api/parcels', {
    data: { name: parcelName, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: square(-72.97, 43.93) },
  });
  expect(created.status(), await created.text()).toBe(201);
  parcelId = (await created.json()).parcel.id;
  const me = await (await steward.get('/api/me')).json();
  clubId = me.stewardOfClubIds[0];
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  chagaId = species.find((s) => s.commonName === 'Chaga')?.id ?? '';
  expect(chagaId).not.toBe('');
  // Opening a parcel to requests needs an allowance and terms: oyster mushrooms, so chaga's limits start unset.
  const oysterId = species.find((s) => s.commonName === 'Oyster mushroom')?.id;
  const allowed = await walter.post(`/api/parcels/${parcelId}/allowances`, { data: { speciesId: oysterId, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [{ scope: 'day', quantity: '1', unit: 'kg' }] } });
  expect(allowed.status(), await allowed.text()).toBe(201);
  const terms = await walter.post(`/api/parcels/${parcelId}/terms`, { data: { body: 'Pick oysters by hand; leave the small ones.' } });
  expect(terms.status(), await terms.text()).toBeLessThan(300);
  const opened = await walter.patch(`/api/parcels/${parcelId}`, { data: { openToRequests: true } });
  expect(opened.status(), await opened.text()).toBe(200);
});

test.afterAll(async () => Promise.all([walter, beth, steward].map((c) => c?.dispose())));

const chaga = (seasonKg: string) => ({
  speciesId: chagaId, seasons: [{ start: '01-01', end: '12-31' }], methods: ['cut'],
  limits: [{ scope: 'visit', quantity: '500', unit: 'g' }, { scope: 'season', quantity: seasonKg, unit: 'kg' }],
});

async function newestMail(request: APIRequestContext, email: string, subject: string) {
  let found: { subject: string; text: string } | undefined;
  await expect.poll(async () => {
    found = (await mailFor(request, email)).find((m) => m.subject === subject);
    return Boolean(found);
  }, { message: `an e-mail "${subject}" for ${email}` }).toBe(true);
  return found as { subject: string; text: string };
}

test('given an approved request with a fee and a message, the approval e-mail states the fee in dollars and quotes the message', async () => {
  const asked = await beth.post('/api/access-requests', { data: { parcelId, startsOn: parcelDay(30), endsOn: parcelDay(390), note: 'Chaga from the birches by the road, please.' } });
  expect(asked.status(), await asked.text()).toBe(201);
  const permitId = (await asked.json()).permit.id as string;
  const decided = await walter.post(`/api/permits/${permitId}/decision`, { data: { decision: 'approve', feeMinor: 2500, message: 'Park by the gate, not on the verge.' } });
  expect(decided.status(), await decided.text()).toBe(200);

  const mail = await newestMail(beth, bethEmail, `Your request for ${parcelName} is approved`);
  expect(mail.text).toContain('The fee is $25.00');
  expect(mail.text).toContain('The landowner wrote: "Park by the gate, not on the verge."');
});

test('given an approved club request with no fee and no message, the stewards read "There is no fee" and that nothing was added', async () => {
  const asked = await steward.post('/api/access-requests', { data: { parcelId, clubId, startsOn: parcelDay(30), endsOn: parcelDay(390), note: 'For the club, chaga only.' } });
  expect(asked.status(), await asked.text()).toBe(201);
  const permitId = (await asked.json()).permit.id as string;
  const decided = await walter.post(`/api/permits/${permitId}/decision`, { data: { decision: 'approve', feeMinor: 0 } });
  expect(decided.status(), await decided.text()).toBe(200);

  const mail = await newestMail(steward, stewardEmail, `Your request for ${parcelName} is approved`);
  expect(mail.text).toContain('There is no fee.');
  expect(mail.text).toContain('The landowner added no message.');
  expect(mail.text).not.toContain('$');
});

test("given a landowner who lowers a parcel's limit, each holder (a club's stewards for its permit) is told the new figure beside the old", async () => {
  const first = await walter.put(`/api/parcels/${parcelId}/allowances`, { data: chaga('2') });
  expect(first.status(), await first.text()).toBe(200);
  // Both permits above are approved and had no chaga limit at all: the first allowance is news to both.
  const personalSubject = `Tighter limits on your permit for ${parcelName}`;
  const firstMail = await newestMail(beth, bethEmail, personalSubject);
  expect(firstMail.text).toContain('Chaga: 2 kg a season, was no limit a season');

  const lowered = await walter.put(`/api/parcels/${parcelId}/allowances`, { data: chaga('1') });
  expect(lowered.status(), await lowered.text()).toBe(200);
  await expect.poll(async () => (await mailFor(beth, bethEmail)).filter((m) => m.subject === personalSubject).length).toBe(2);
  const [newest] = (await mailFor(beth, bethEmail)).filter((m) => m.subject === personalSubject);
  expect(newest?.text).toContain('Chaga: 1 kg a season, was 2 kg a season');
  // The visit limit did not change, so it is not in the list.
  expect(newest?.text).not.toMatch(/\d g a visit/);

  const clubSubject = `Tighter limits on the Three Ridges Foraging Society permit for ${parcelName}`;
  await expect.poll(async () => (await mailFor(steward, stewardEmail)).filter((m) => m.subject === clubSubject).length).toBe(2);
  const [clubMail] = (await mailFor(steward, stewardEmail)).filter((m) => m.subject === clubSubject);
  expect(clubMail?.text).toContain('Chaga: 1 kg a season, was 2 kg a season');
  expect(clubMail?.text).toContain('/club');

  // Raising it back is not a tightening: nobody is told.
  const raised = await walter.put(`/api/parcels/${parcelId}/allowances`, { data: chaga('1.5') });
  expect(raised.status()).toBe(200);
  await new Promise((resolve) => setTimeout(resolve, 500));
  expect((await mailFor(beth, bethEmail)).filter((m) => m.subject === personalSubject)).toHaveLength(2);
});

test("given a landowner who tightens one club permit's own limit, only that club's stewards are told", async () => {
  const { permits } = (await (await walter.get(`/api/parcels/${parcelId}/permits`)).json()) as { permits: { id: string; holderClubId: string | null }[] };
  const clubPermit = permits.find((p) => p.holderClubId === clubId);
  expect(clubPermit).toBeDefined();
  const before = (await mailFor(beth, bethEmail)).length;
  const tightened = await walter.post(`/api/permits/${clubPermit?.id}/limits`, { data: { speciesId: chagaId, scope: 'visit', quantity: '250', unit: 'g' } });
  expect(tightened.status(), await tightened.text()).toBe(201);
  const clubSubject = `Tighter limits on the Three Ridges Foraging Society permit for ${parcelName}`;
  await expect.poll(async () => (await mailFor(steward, stewardEmail)).filter((m) => m.subject === clubSubject).length).toBe(3);
  const [newest] = (await mailFor(steward, stewardEmail)).filter((m) => m.subject === clubSubject);
  expect(newest?.text).toContain('Chaga: 250 g a visit, was 500 g a visit');
  expect(newest?.text).not.toMatch(/\d k?g a season/);
  expect((await mailFor(beth, bethEmail)).length).toBe(before);
});
