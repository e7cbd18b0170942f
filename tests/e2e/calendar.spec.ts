import ICAL from 'ical.js';
import { expect, request as playwrightRequest, test, type APIRequestContext } from '@playwright/test';
import { apiAs, baseURL, pageAs } from './support';

/**
 * A private calendar feed (issue 14). Walter lists a parcel with one species whose season opens
 * twenty days from the parcel's today and grants the demo forager a permit there; the forager makes
 * a feed, a calendar app (no cookies) fetches it, and it is read with ical.js. Whole days are DATE
 * values (RFC 5545 §3.3.4), an all-day DTEND is the day after the last day (§3.6.1, exclusive), and
 * a zone is described by a VTIMEZONE with its TZID (§3.6.5). Expected dates come from the permit API
 * and from the season Walter set, moved by whole days with Date.UTC, never from the feed's code.
 */
const forager = 'forager@example.org';
const stamp = Date.now();
const parcelName = `Calendar lot ${stamp}`;
const west = -72.75;
const south = 44.05;
const size = 0.003;

/** The parcel's calendar date of an instant, by the runtime's IANA data (Intl, ECMA-402). */
const newYorkDate = (at: Date) => new Intl.DateTimeFormat('en-CA', { timeZone: 'America/New_York', year: 'numeric', month: '2-digit', day: '2-digit' }).format(at);
/** A calendar date moved by whole days. */
const plusDays = (isoDate: string, days: number) => {
  const [y, m, d] = isoDate.split('-').map(Number);
  return new Date(Date.UTC(y ?? 0, (m ?? 1) - 1, (d ?? 1) + days)).toISOString().slice(0, 10);
};

let walter: APIRequestContext;
let permitId = '';
let parcelId = '';
const today = newYorkDate(new Date());
const opensOn = plusDays(today, 20);

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  walter = await apiAs('landowner@example.org');
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: parcelName, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: '', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  parcelId = (await created.json()).parcel.id as string;
  const listed = await walter.patch(`/api/parcels/${parcelId}`, { data: { status: 'listed' } });
  expect(listed.status(), await listed.text()).toBe(200);
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  const oyster = species.find((s) => s.commonName === 'Oyster mushroom');
  const season = { start: opensOn.slice(5), end: plusDays(today, 50).slice(5) };
  const allowed = await walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId: oyster?.id, seasons: [season], methods: ['pick'], limits: [{ scope: 'day', quantity: '1', unit: 'kg' }] } });
  expect(allowed.status(), await allowed.text()).toBe(200);
  const granted = await walter.post(`/api/parcels/${parcelId}/permits`, {
    data: { holder: { kind: 'forager', email: forager }, startsOn: plusDays(today, -1), endsOn: plusDays(today, 100), note: 'Calendar test' },
  });
  expect(granted.status(), await granted.text()).toBe(201);
  permitId = ((await granted.json()) as { permit: { id: string } }).permit.id;
});

test.afterAll(async () => walter?.dispose());

type Parsed = { uid: string; summary: string; start: ICAL.Time; end: ICAL.Time | null };

function parseFeed(text: string): { events: Parsed[]; zones: string[] } {
  const calendar = new ICAL.Component(ICAL.parse(text));
  return {
    events: calendar.getAllSubcomponents('vevent').map((v) => ({
      uid: String(v.getFirstPropertyValue('uid')),
      summary: String(v.getFirstPropertyValue('summary')),
      start: v.getFirstPropertyValue('dtstart') as ICAL.Time,
      end: v.getFirstPropertyValue('dtend') as ICAL.Time | null,
    })),
    zones: calendar.getAllSubcomponents('vtimezone').map((z) => String(z.getFirstPropertyValue('tzid'))),
  };
}

/** A calendar app: no cookies, no session. */
const calendarApp = () => playwrightRequest.newContext({ baseURL });

test('given My permits at 390 and 1280 px, the forager makes a calendar address, sees it with a copy button, and it opens with no session', async ({ browser }) => {
  const page = await pageAs(browser, forager);
  page.on('dialog', (dialog) => void dialog.accept());
  const app = await calendarApp();
  try {
    for (const width of [390, 1280]) {
      await page.setViewportSize({ width, height: 900 });
      await page.goto('/my-permits');
      const panel = page.getByTestId('calendar-feed');
      await page.locator('[data-testid="calendar-feed"][data-hydrated="true"]').waitFor();
      await panel.getByRole('button', { name: /Make my calendar address|Make a new address/ }).click();
      const address = panel.getByTestId('calendar-feed-url');
      await expect(address).toHaveValue(new RegExp(`^${baseURL}/api/calendar/[A-Za-z0-9_-]{43}\\.ics$`));
      await expect(panel.getByRole('button', { name: 'Copy address' })).toBeVisible();
      await expect(panel.getByTestId('calendar-feed-webcal')).toHaveAttribute('href', /^webcal:\/\//);
      const { scrollWidth, innerWidth } = await page.evaluate(() => ({ scrollWidth: document.documentElement.scrollWidth, innerWidth: window.innerWidth }));
      expect(scrollWidth, `page width at ${width} px`).toBeLessThanOrEqual(innerWidth);
      const fetched = await app.get(await address.inputValue());
      expect(fetched.status()).toBe(200);
      expect(fetched.headers()['content-type']).toBe('text/calendar; charset=utf-8');
    }
  } finally {
    await app.dispose();
    await page.context().close();
  }
});

test('given a feed made through the API, a calendar app reads the permit window and the season opening as whole local days with New York’s VTIMEZONE; a new address and then turning it off leave the old ones answering 404', async () => {
  const me = await apiAs(forager);
  const app = await calendarApp();
  try {
    const made = await me.post('/api/calendar-feed');
    expect(made.status(), await made.text()).toBe(201);
    const { feed } = (await made.json()) as { feed: { url: string; webcal: string } };
    expect(feed.webcal).toBe(feed.url.replace(/^http:/, 'webcal:'));
    const path = new URL(feed.url).pathname;

    const answer = await app.get(path);
    expect(answer.status()).toBe(200);
    expect(answer.headers()['content-type']).toBe('text/calendar; charset=utf-8');
    expect(answer.headers()['cache-control']).toMatch(/\bprivate\b/);
    const { events, zones } = parseFeed(await answer.text());

    // The permit as the permit API states it: its first and last days on the parcel's calendar.
    const permit = ((await (await me.get(`/api/permits/${permitId}`)).json()) as { permit: { startsOn: string; endsOn: string } }).permit;
    const window = events.find((e) => e.uid === `permit-${permitId}@tallywood`);
    expect(window, 'the permit window').toBeDefined();
    expect(window?.summary).toContain(parcelName);
    expect(window?.start.isDate).toBe(true);
    expect(window?.start.toString()).toBe(permit.startsOn);
    expect(window?.end?.toString()).toBe(plusDays(permit.endsOn, 1));

    const opening = events.find((e) => e.summary === `Season opens: Oyster mushroom on ${parcelName}`);
    expect(opening, 'the season opening').toBeDefined();
    expect(opening?.start.isDate).toBe(true);
    expect(opening?.start.toString()).toBe(opensOn);
    expect(opening?.end?.toString()).toBe(plusDays(opensOn, 1));
    expect(zones).toContain('America/New_York');

    // Scoped to the forager: every permit in the feed is one My permits lists for them.
    const page = await me.get('/my-permits');
    const mine = new Set([...(await page.text()).matchAll(/data-permit="([0-9a-f-]{36})"/g)].map((m) => m[1]));
    const inFeed = events.filter((e) => e.uid.startsWith('permit-')).map((e) => e.uid.slice('permit-'.length, -'@tallywood'.length));
    expect(inFeed.length).toBeGreaterThan(0);
    expect(inFeed.filter((id) => !mine.has(id))).toEqual([]);

    // A new address: the old one stops working at once, the new one works.
    const again = await me.post('/api/calendar-feed');
    expect(again.status()).toBe(201);
    const newPath = new URL(((await again.json()) as { feed: { url: string } }).feed.url).pathname;
    expect(newPath).not.toBe(path);
    const old = await app.get(path);
    expect(old.status()).toBe(404);
    expect(old.headers()['content-type']).toMatch(/^text\/plain/);
    expect(await old.text()).toMatch(/not in use/);
    expect((await app.get(newPath)).status()).toBe(200);

    // Turned off: the address answers 404.
    const off = await me.delete('/api/calendar-feed');
    expect(off.status()).toBe(200);
    expect(await off.json()).toEqual({ revoked: true });
    expect((await app.get(newPath)).status()).toBe(404);
    expect((await app.get('/api/calendar/not-a-token.ics')).status()).toBe(404);
  } finally {
    await app.dispose();
    await me.dispose();
  }
});

test('given no session, making or turning off a feed is refused with 401', async () => {
  const app = await calendarApp();
  try {
    expect((await app.post('/api/calendar-feed', { headers: { origin: baseURL } })).status()).toBe(401);
    expect((await app.delete('/api/calendar-feed', { headers: { origin: baseURL } })).status()).toBe(401);
  } finally {
    await app.dispose();
  }
});

test("given the landowner's own feed, made on Land, a calendar app reads the permit he granted and his parcel's season opening as whole local days, and nothing of land he does not own", async ({ browser }) => {
  const page = await pageAs(browser, 'landowner@example.org');
  page.on('dialog', (dialog) => void dialog.accept());
  const app = await calendarApp();
  try {
    let path = '';
    for (const width of [390, 1280]) {
      await page.setViewportSize({ width, height: 900 });
      await page.goto('/land');
      await page.locator('[data-testid="calendar-feed"][data-hydrated="true"]').waitFor();
      const panel = page.getByTestId('calendar-feed');
      await expect(panel).toContainText('the permits you have granted');
      await panel.getByRole('button', { name: /Make my calendar address|Make a new address/ }).click();
      const address = panel.getByTestId('calendar-feed-url');
      await expect(address).toHaveValue(new RegExp(`^${baseURL}/api/calendar/[A-Za-z0-9_-]{43}\\.ics$`));
      const { scrollWidth, innerWidth } = await page.evaluate(() => ({ scrollWidth: document.documentElement.scrollWidth, innerWidth: window.innerWidth }));
      expect(scrollWidth, `page width at ${width} px`).toBeLessThanOrEqual(innerWidth);
      path = new URL(await address.inputValue()).pathname;
    }
    const answer = await app.get(path);
    expect(answer.status()).toBe(200);
    const { events } = parseFeed(await answer.text());

    const permit = ((await (await walter.get(`/api/permits/${permitId}`)).json()) as { permit: { startsOn: string; endsOn: string } }).permit;
    const granted = events.find((e) => e.uid === `granted-${permitId}@tallywood`);
    expect(granted, 'the granted permit').toBeDefined();
    expect(granted?.summary).toMatch(new RegExp(`^Permit on your land: .+, ${parcelName}$`));
    expect(granted?.start.toString()).toBe(permit.startsOn);
    expect(granted?.end?.toString()).toBe(plusDays(permit.endsOn, 1));

    const opening = events.find((e) => e.uid.startsWith(`season-opens-${parcelId}-`));
    expect(opening?.summary).toBe(`Season opens: Oyster mushroom on ${parcelName}`);
    expect(opening?.start.toString()).toBe(opensOn);

    // Scoped to his land: Farrand Sugarbush, Farrand Woodlots and Hosmer Back Forty are other owners' parcels in the
    // demo (src/db/demo), with permits and seasons of their own.
    expect(events.filter((e) => /Farrand Sugarbush|Farrand Woodlots|Hosmer Back Forty/.test(e.summary))).toEqual([]);
  } finally {
    await app.dispose();
    await page.context().close();
  }
});
