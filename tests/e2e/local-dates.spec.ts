import { randomUUID } from 'node:crypto';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, pageAs } from './support';

/*
 * "Today" is the parcel's own calendar day, never the UTC date (DESIGN.md). Every expected date here
 * comes from the test's own clock read in the parcel's zone through Intl, that is the IANA tz data;
 * nothing assumes the real date. `npm test` runs this file again with the whole stack's clock moved
 * (at 00:30 UTC New York is still on the day before; at 04:45 UTC it is 23:45 there), so a date read
 * before and after each step is accepted: the page may be drawn on either side of the parcel's midnight.
 *
 * Walter makes a listed parcel open to requests (an allowance and terms first, as opening needs), with no fee, clear of the demo valley and
 * of the other specs' parcels (−73.005…−73.003, 43.875…43.877).
 */
const zone = 'America/New_York';
const west = -73.005;
const south = 43.875;
const size = 0.002;
const centre = { longitude: west + size / 2, latitude: south + size / 2 };
const parcelName = `Local dates lot ${Date.now()}`;

/** The parcel's calendar date now, YYYY-MM-DD (en-CA writes ISO order), from the IANA tz data. */
const parcelToday = () => new Intl.DateTimeFormat('en-CA', { timeZone: zone, year: 'numeric', month: '2-digit', day: '2-digit' }).format(new Date());

/** Gregorian rule: a year divisible by 4 is leap, except centuries, except those divisible by 400. */
const isLeapYear = (year: number) => (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;

/** The same date a year later; 29 February becomes 28 February when the next year is common. */
function sameDateNextYear(iso: string) {
  const [year, month, day] = iso.split('-') as [string, string, string];
  const next = Number(year) + 1;
  return `${next}-${month}-${month === '02' && day === '29' && !isLeapYear(next) ? '28' : day}`;
}

/** The parcel's dates around an action: the action's "today" is one of them (two only across midnight). */
async function around<T>(action: () => Promise<T>): Promise<{ result: T; days: string[] }> {
  const before = parcelToday();
  const result = await action();
  return { result, days: [...new Set([before, parcelToday()])] };
}

let walter: APIRequestContext;
let june: APIRequestContext;
let parcelId = '';
let oysterId = '';
const recorded = { id: '', recordedAt: '' };

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  [walter, june] = await Promise.all([apiAs('landowner@example.org'), apiAs('june.farrand@example.org')]);
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: parcelName, timeZone: zone, nearingThresholdPercent: 80, openToRequests: false, description: 'Oyster logs by the road.', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  parcelId = (await created.json()).parcel.id;
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  oysterId = species.find((s) => s.commonName === 'Oyster mushroom')?.id ?? '';
  const allowed = await walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId: oysterId, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [{ scope: 'day', quantity: '1', unit: 'kg' }] } });
  expect(allowed.status(), await allowed.text()).toBe(200);
  const terms = await walter.post(`/api/parcels/${parcelId}/terms`, { data: { body: 'Pick by hand; leave half of every cluster.' } });
  expect(terms.status(), await terms.text()).toBeLessThan(300);
  const opened = await walter.patch(`/api/parcels/${parcelId}`, { data: { openToRequests: true } });
  expect(opened.status(), await opened.text()).toBe(200);
});

test.afterAll(async () => {
  // Archived, the parcel takes no more check-ins or requests, so a later run in the same database finds only its own parcel here.
  await walter?.patch(`/api/parcels/${parcelId}`, { data: { status: 'archived' } });
  await Promise.all([walter, june].map((c) => c?.dispose()));
});

test("given a landowner's parcel page, the grant form runs from the parcel's today to the same date next year, and the audit is as of that today", async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');
  const grant = page.getByTestId('grant');
  const asOf = page.getByTestId('audit-panel').getByLabel('As of');
  const { result, days } = await around(async () => {
    // The grant form is on the parcel's Permits page, the audit on its Tallies page.
    await page.goto(`/land/${parcelId}/permits`);
    // The form fills its fields once its island is live; the audit panel renders in the browser only.
    await expect(grant.getByLabel('First day')).toHaveValue(/^\d{4}-\d{2}-\d{2}$/);
    const dates = { first: await grant.getByLabel('First day').inputValue(), last: await grant.getByLabel('Last day').inputValue() };
    await page.goto(`/land/${parcelId}/tallies`);
    await expect(asOf).toHaveValue(/^\d{4}-\d{2}-\d{2}$/);
    return { ...dates, asOf: await asOf.inputValue() };
  });
  expect(days).toContain(result.first);
  expect(result.last).toBe(sameDateNextYear(result.first));
  expect(days).toContain(result.asOf);
  await page.context().close();
});

test("given a forager on My permits, the access request form runs from the parcel's today to the same date next year", async ({ browser }) => {
  const page = await pageAs(browser, 'forager@example.org');
  const card = page.getByTestId('open-parcels').locator(`[data-parcel="${parcelName}"]`);
  const { result, days } = await around(async () => {
    await page.goto('/my-permits');
    await card.getByText('Ask for access').click();
    await expect(card.getByLabel('From')).toHaveValue(/^\d{4}-\d{2}-\d{2}$/);
    return { from: await card.getByLabel('From').inputValue(), until: await card.getByLabel('Until').inputValue() };
  });
  expect(days).toContain(result.from);
  expect(result.until).toBe(sameDateNextYear(result.from));
  await page.context().close();
});

test("given a permit granted from the parcel's today with no fee, once the holder accepts the terms it is active and the holder's check-in there is clear", async () => {
  const { result: granted, days } = await around(async () => {
    const startsOn = parcelToday();
    const response = await walter.post(`/api/parcels/${parcelId}/permits`, { data: { holder: { kind: 'forager', email: 'june.farrand@example.org' }, startsOn, endsOn: sameDateNextYear(startsOn) } });
    expect(response.status(), await response.text()).toBe(201);
    return (await response.json()).permit as { id: string; state: string };
  });
  expect(granted.state).toBe('approved');
  const accepted = await june.post(`/api/permits/${granted.id}/accept-terms`, { data: {} });
  expect(accepted.status(), await accepted.text()).toBe(200);
  expect((await accepted.json()).permit.state).toBe('active');

  const { result: answer, days: checkInDays } = await around(async () => {
    const response = await june.post('/api/check-ins', { data: { ...centre, accuracyM: 5 } });
    expect(response.status(), await response.text()).toBe(200);
    return (await response.json()) as { verdict: string; reasons: string[]; permitId: string | null; visitId: string | null; localDate: string; parcel: { id: string } | null };
  });
  expect(answer, answer.reasons.join(' ')).toMatchObject({ verdict: 'clear', permitId: granted.id, parcel: { id: parcelId } });
  expect([...days, ...checkInDays]).toContain(answer.localDate);

  // An entry there counts on the parcel's today.
  const { result: entry, days: entryDays } = await around(async () => {
    const response = await june.post('/api/harvest-entries', { data: { idempotencyKey: randomUUID(), visitId: answer.visitId, speciesId: oysterId, method: 'pick', quantities: [{ quantity: '120', unit: 'g' }] } });
    expect(response.status(), await response.text()).toBe(201);
    return (await response.json()).entry as { id: string; localDate: string; countedOn: string; recordedAt: string };
  });
  expect(entryDays).toContain(entry.localDate);
  expect(entry.countedOn).toBe(entry.localDate);
  recorded.id = entry.id;
  recorded.recordedAt = entry.recordedAt;
});

test("given that entry, My ledger shows the parcel's date it counts on and the time it was recorded on the parcel's clock, named EST or EDT", async ({ browser }) => {
  test.skip(!recorded.id, 'The entry of the previous test was not recorded.');
  const at = new Date(recorded.recordedAt);
  // The instant read in the parcel's zone (IANA tz data): its date as en-US writes it, its clock time and its zone abbreviation.
  const parts = Object.fromEntries(
    new Intl.DateTimeFormat('en-US', { timeZone: zone, year: 'numeric', month: 'short', day: 'numeric', hour: 'numeric', minute: '2-digit', timeZoneName: 'short' })
      .formatToParts(at)
      .map((p) => [p.type, p.value]),
  );
  expect(parts.timeZoneName).toMatch(/^E[SD]T$/);

  const page = await pageAs(browser, 'june.farrand@example.org');
  await page.goto('/ledger');
  const row = page.locator(`tr[data-entry="${recorded.id}"]`);
  await expect(row).toContainText(parcelName);
  await expect(row.locator('td').first()).toHaveText(`${parts.month} ${parts.day}, ${parts.year}`);
  const time = row.locator('time');
  await expect(time).toHaveText(new RegExp(`${parts.hour}:${parts.minute}\\s${parts.dayPeriod} ${parts.timeZoneName}$`));
  await page.context().close();
});
