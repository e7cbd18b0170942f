import { connect } from '../../src/db/client';
import { expect, test } from '@playwright/test';
import { pageAs } from './support';

/*
 * A fee the refund job could not give back after its last try is marked on its payment
 * (`refund_failed_at`, src/server/jobs/refund-payment.ts); the landowner's Permits page says so in words,
 * on a phone (390 px) and a laptop (1280 px), with nothing wider than the window. The payment is the
 * demo's fee paid for Owen's permit on Walter's Cobble Ridge Lot (data/demo/scenario.json), marked here
 * and unmarked afterwards: reaching the mark through the provider takes hours of retries.
 */
test.describe.configure({ mode: 'serial' });

const sql = connect(process.env.DATABASE_URL ?? '', { max: 1, onnotice: () => {} });
let marked: { paymentId: string; permitId: string; parcelId: string } | null = null;

test.beforeAll(async () => {
  const [row] = await sql<{ paymentId: string; permitId: string; parcelId: string }[]>`
    select pay.id as "paymentId", pm.id as "permitId", p.id as "parcelId"
    from payments pay join permits pm on pm.id = pay.permit_id join parcels p on p.id = pm.parcel_id join users u on u.id = p.owner_id
    where u.email = 'landowner@example.org' and p.name = 'Cobble Ridge Lot' and pay.state = 'paid' limit 1`;
  expect(row, 'the demo has a paid fee on Cobble Ridge Lot').toBeDefined();
  marked = row ?? null;
  if (marked) await sql`update payments set refund_failed_at = now() where id = ${marked.paymentId}`;
});

test.afterAll(async () => {
  if (marked) await sql`update payments set refund_failed_at = null where id = ${marked.paymentId}`;
  await sql.end({ timeout: 5 });
});

for (const width of [390, 1280]) {
  test(`given a fee whose refund failed for good, the landowner's Permits page says to refund it by hand, in a window ${width} px wide`, async ({ browser }) => {
    const page = await pageAs(browser, 'landowner@example.org');
    await page.setViewportSize({ width, height: 900 });
    await page.goto(`/land/${marked?.parcelId}/permits`);
    const permit = page.locator(`[data-permit="${marked?.permitId}"]`);
    await expect(permit.getByTestId('refund-failed')).toHaveText('refund failed — refund by hand');
    await expect(permit.getByTestId('refund-failed')).toBeVisible();
    const { scrollWidth, innerWidth } = await page.evaluate(() => ({ scrollWidth: document.documentElement.scrollWidth, innerWidth: window.innerWidth }));
    expect(scrollWidth).toBeLessThanOrEqual(innerWidth);
    // Only that permit is marked.
    await expect(page.getByTestId('refund-failed')).toHaveCount(1);
    await page.context().close();
  });
}
