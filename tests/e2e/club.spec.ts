import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, mailFor, pageAs, signIn } from './support';

/*
 * A steward's season, end to end in Chromium: the steward invites a new member, who accepts; the
 * steward asks for a club permit on Walter's parcel; Walter approves; the member harvests past the
 * day limit (acknowledged), which is a breach; the steward sees the flag, records a follow-up, and
 * sends the season report, which reaches Walter.
 *
 * Walter's parcel for this file lies clear of the demo valley and the other specs' parcels, open to
 * requests (so it has terms, which the steward accepts for the club), with oyster mushrooms allowed all year and 1 kg a day. 1200 g is 120 % of 1 kg: over,
 * a breach (GLOSSARY.md "tally states").
 */
const west = -72.93;
const south = 43.83;
const size = 0.003;
const centre = { longitude: west + size / 2, latitude: south + size / 2 };
const clubName = 'Three Ridges Foraging Society';
const stamp = Date.now();
const parcelName = `Stewardship lot ${stamp}`;
const memberEmail = `new-member-${stamp}@example.org`;

/** The parcel's calendar day of an instant, as people there write it ("Dec 2, 2026"), by the browser runtime's own Intl, not ours. */
const localDay = (at: Date) => new Intl.DateTimeFormat('en-US', { timeZone: 'America/New_York', year: 'numeric', month: 'short', day: 'numeric' }).format(at);

let walter: APIRequestContext;
let parcelId = '';

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
  walter = await apiAs('landowner@example.org');
  const ring = [[west, south], [west + size, south], [west + size, south + size], [west, south + size], [west, south]];
  const created = await walter.post('/api/parcels', { data: { name: parcelName, timeZone: 'America/New_York', nearingThresholdPercent: 80, openToRequests: false, description: 'Oyster logs in the hemlock draw.', boundary: { type: 'Polygon', coordinates: [ring] } } });
  expect(created.status(), await created.text()).toBe(201);
  parcelId = (await created.json()).parcel.id;
  const listed = await walter.patch(`/api/parcels/${parcelId}`, { data: { status: 'listed' } });
  expect(listed.status(), await listed.text()).toBe(200);
  const { species } = (await (await walter.get('/api/species')).json()) as { species: { id: string; commonName: string }[] };
  const oyster = species.find((s) => s.commonName === 'Oyster mushroom');
  const allowed = await walter.put(`/api/parcels/${parcelId}/allowances`, { data: { speciesId: oyster?.id, seasons: [{ start: '01-01', end: '12-31' }], methods: ['pick'], limits: [{ scope: 'day', quantity: '1', unit: 'kg' }] } });
  expect(allowed.status(), await allowed.text()).toBe(200);
  // Opening a parcel to requests needs an allowance and terms.
  const terms = await walter.post(`/api/parcels/${parcelId}/terms`, { data: { body: 'Cut oysters at the base; leave the small ones.' } });
  expect(terms.status(), await terms.text()).toBeLessThan(300);
  const opened = await walter.patch(`/api/parcels/${parcelId}`, { data: { openToRequests: true } });
  expect(opened.status(), await opened.text()).toBe(200);
});

test.afterAll(async () => walter?.dispose());

test('given a steward, a new member and a landowner, the club permit, a breach, its follow-up and the season report all work', async ({ browser }) => {
  // 1. The steward invites someone Tallywood does not know yet.
  const steward = await pageAs(browser, 'steward@example.org');
  await steward.goto('/club');
  const club = steward.locator(`[data-club="${clubName}"]`);
  await club.locator('[data-hydrated="true"]').first().waitFor();
  await club.getByLabel('E-mail').fill(memberEmail);
  await club.getByLabel('Role').selectOption('member');
  await club.getByRole('button', { name: 'Send invitation' }).click();
  await expect(club.getByRole('row').filter({ hasText: memberEmail })).toContainText('invited');
  await expect.poll(async () => (await mailFor(steward.request, memberEmail)).some((m) => m.subject === `You are invited to join ${clubName}`)).toBe(true);

  // 2. They sign in with that address and join.
  const memberContext = await browser.newContext({ geolocation: { ...centre, accuracy: 5 }, permissions: ['geolocation'] });
  const member = await memberContext.newPage();
  await signIn(member, memberEmail);
  await member.goto('/club');
  await member.getByRole('button', { name: `Join ${clubName}` }).click();
  await expect(member.locator(`[data-membership="${clubName}"]`)).toContainText('member since');

  // 3. The steward asks for access for the club.
  await steward.goto('/my-permits');
  const card = steward.getByTestId('open-parcels').locator(`[data-parcel="${parcelName}"]`);
  await card.getByText('Ask for access').click();
  await card.getByLabel('Ask for').selectOption({ label: `${clubName} (club)` });
  await card.getByLabel(/What you would like to harvest/).fill('Oyster mushrooms for the club, a few pounds over the winter.');
  await card.getByRole('button', { name: 'Send request' }).click();
  await expect(steward.getByTestId('my-permits').locator('li').filter({ hasText: parcelName }).locator('[data-state="requested"]')).toBeVisible();

  // 4. Walter approves it (no fee); the steward accepts the terms for the club: active from today.
  const { permits } = (await (await walter.get(`/api/parcels/${parcelId}/permits`)).json()) as { permits: { id: string; state: string; holderClubId: string | null }[] };
  const request = permits.find((p) => p.state === 'requested' && p.holderClubId);
  expect(request).toBeTruthy();
  const decided = await walter.post(`/api/permits/${request?.id}/decision`, { data: { decision: 'approve', message: 'Welcome, club.' } });
  expect(decided.status(), await decided.text()).toBe(200);
  const stewardApi = await apiAs('steward@example.org');
  const accepted = await stewardApi.post(`/api/permits/${request?.id}/accept-terms`, { data: {} });
  expect(accepted.status(), await accepted.text()).toBe(200);
  await stewardApi.dispose();
  await steward.goto('/club');
  await expect(club.getByTestId('club-permits').locator('li').filter({ hasText: parcelName }).locator('[data-state="active"]')).toBeVisible();

  // 5. The member harvests past the day limit, acknowledging it: a breach.
  await member.goto('/field');
  await member.locator('[data-hydrated]').first().waitFor();
  await member.getByRole('button', { name: 'Use my location' }).click();
  await expect(member.getByTestId('verdict')).toHaveAttribute('data-verdict', 'clear');
  const form = member.getByTestId('harvest-form');
  await form.getByLabel('Species').selectOption({ label: 'Oyster mushroom' });
  await form.getByLabel('Unit').selectOption('g');
  await form.getByLabel('Quantity').fill('1200');
  await expect(form.getByTestId('projection').locator('[data-scope="day"]')).toHaveAttribute('data-state', 'over');
  await form.getByText('This takes a limit over').click();
  // With a photo whose EXIF GPS tags (EXIF 2.32 GPS IFD) place the camera on the parcel, as a phone writes them.
  const sharp = (await import('sharp')).default;
  const exif = { IFD3: { GPSLatitudeRef: 'N', GPSLatitude: '43/1 49/1 53/1', GPSLongitudeRef: 'W', GPSLongitude: '72/1 55/1 42/1' } };
  const photo = await sharp({ create: { width: 24, height: 18, channels: 3, background: '#c9b27c' } }).jpeg().withExif(exif).toBuffer();
  await form.getByLabel('Photo (optional)').setInputFiles({ name: 'oysters.jpg', mimeType: 'image/jpeg', buffer: photo });
  const savedAt = new Date();
  await form.getByRole('button', { name: 'Save entry' }).click();
  await expect(member.getByTestId('species').locator('[data-species="Oyster mushroom"]')).toHaveAttribute('data-state', 'over');
  await memberContext.close();

  // 6. The steward sees the flag and records a follow-up that handles it.
  await steward.goto('/club');
  await club.getByTestId('flags-panel').and(club.locator('[data-hydrated="true"]')).waitFor();
  const flag = club.locator('[data-flag]').filter({ hasText: parcelName });
  await expect(flag).toContainText('Breach');
  await flag.getByLabel('Follow-up note').fill('Spoke with the member; the extra was shared at the club walk. Reminded of the 1 kg day limit.');
  await flag.getByLabel('Mark as handled').check();
  await flag.getByLabel(/^Also send this note to /).check();
  await flag.getByRole('button', { name: 'Record follow-up' }).click();
  // The member gets the note with the flag's facts: 1200 g on a 1 kg day limit is 0.2 kg over, on the
  // parcel's day (America/New_York), which is today there as the entry was saved a moment ago.
  const noteSubject = `A note about your Oyster mushroom entry on ${parcelName}`;
  await expect.poll(async () => (await mailFor(steward.request, memberEmail)).some((m) => m.subject === noteSubject), { message: 'the follow-up e-mail to the member' }).toBe(true);
  const noteMail = (await mailFor(steward.request, memberEmail)).find((m) => m.subject === noteSubject);
  expect(noteMail?.text).toContain('Marisol Kent, a steward of Three Ridges Foraging Society, wrote about your entry of 1,200 g of Oyster mushroom');
  expect(noteMail?.text).toContain('"Spoke with the member; the extra was shared at the club walk. Reminded of the 1 kg day limit."');
  expect(noteMail?.text).toContain('How much over: 0.2 kg over the limit of 1 kg a day (1.2 kg counted)');
  expect([localDay(savedAt), localDay(new Date())].some((day) => noteMail?.text.includes(`counted on ${day}`)), noteMail?.text).toBe(true);
  await club.getByRole('button', { name: 'All', exact: true }).click();
  await expect(club.locator('[data-flag]').filter({ hasText: parcelName })).toHaveAttribute('data-handled', 'true');
  await expect(club.locator('[data-flag]').filter({ hasText: parcelName })).toContainText('Reminded of the 1 kg day limit');

  // The audit shows the member over on the day limit.
  const auditRow = club.getByRole('row').filter({ hasText: parcelName }).filter({ hasText: 'over' }).first();
  await expect(auditRow).toBeVisible();
  // Behind it, the entry's photo: the steward gets the copy without its location, and is told so.
  await auditRow.getByRole('button', { name: 'Details' }).click();
  const figure = club.locator('[data-entries-for]').getByTestId('entry-photo');
  await expect(figure).toHaveAttribute('data-copy', 'shared');
  await expect(figure).toContainText('a copy with the location and camera details removed');
  const image = figure.getByRole('img', { name: /^The forager’s photo of Oyster mushroom, 1,200 g on / });
  await expect.poll(() => image.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBe(24);
  const copy = await steward.request.get((await image.getAttribute('src')) ?? '');
  expect(copy.status()).toBe(200);
  const exifr = (await import('exifr')).default;
  expect((await exifr.gps(photo))?.latitude).toBeGreaterThan(43.8);
  expect(await exifr.gps(await copy.body())).toBeUndefined();

  // 7. The season report, sent to the landowner.
  await club.getByTestId('club-permits').locator('li').filter({ hasText: parcelName }).getByRole('link', { name: 'Season report' }).click();
  const report = steward.getByTestId('season-report');
  await expect(report.getByTestId('breaches')).toHaveText('1');
  await expect(report.getByTestId('visits')).toHaveText('1');
  await expect(report).toContainText('Reminded of the 1 kg day limit');
  // The season once as a heading, a row for the species taken with its total.
  await expect(report.getByRole('heading', { name: /^Season [A-Z][a-z]{2} \d/ })).toHaveCount(1);
  await expect(report.locator('[data-species="Oyster mushroom"]').getByTestId('taken')).toHaveText('1.2 kg');
  await report.locator('[data-hydrated="true"]').waitFor();
  await report.getByRole('button', { name: 'Send to the landowner by e-mail' }).click();
  // The page says it went, and to whom, without leaving it.
  await expect(report.getByTestId('report-sent')).toHaveText('Sent to Walter Pelletier (landowner@example.org), with the CSV attached; a copy went to you (steward@example.org).');
  await expect
    .poll(async () => (await mailFor(steward.request, 'landowner@example.org')).some((m) => m.subject === `Season report for ${parcelName} from ${clubName}`))
    .toBe(true);
  const mail = (await mailFor(steward.request, 'landowner@example.org')).find((m) => m.subject === `Season report for ${parcelName} from ${clubName}`);
  expect(mail?.text).toContain('1 breach,');
  expect(mail?.text).toContain('Oyster mushroom (Pleurotus ostreatus): 1.2 kg taken, 1 entry by 1 forager');
  // The CSV rides along: parsed back, its tally record for the day limit says 1.2 of 1 kg, 120 %, over (worked in the header).
  const [file] = mail?.attachments ?? [];
  expect(file?.filename).toMatch(/^season-report-stewardship-lot-\d+-\d{4}-\d{2}-\d{2}\.csv$/);
  expect(file?.contentType).toBe('text/csv');
  const rows = Buffer.from(file?.contentBase64 ?? '', 'base64').toString('utf8').trim().split('\r\n').map((line) => line.split(','));
  const [head, ...records] = rows;
  const col = (name: string) => (head ?? []).indexOf(name);
  const day = records.find((r) => r[col('section')] === 'tally' && r[col('scope')] === 'day');
  expect([day?.[col('species')], day?.[col('limit')], day?.[col('unit')], day?.[col('used')], day?.[col('percent')], day?.[col('state')]]).toEqual(['Oyster mushroom', '1', 'kg', '1.2', '120', 'over']);
  expect(records.filter((r) => r[col('section')] === 'breach')).toHaveLength(1);
  await steward.context().close();
});
