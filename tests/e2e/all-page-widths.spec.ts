import { connect } from '../../src/db/client';
import { expect, test, type Browser, type Page } from '@playwright/test';
import { sessionFile } from './support';

/*
 * No page is wider than the window, on a phone (390 px) and a laptop (1280 px): every page under
 * src/pages (the API aside), opened by each demo account that may open it (data/demo/people.csv:
 * Owen the forager, Walter the landowner, Marisol the club's steward, Nora the admin) and the public
 * ones signed out. A page with an id opens with a real one of the demo's, read from the test database.
 *
 * One browser page per account, reused for all its pages: each page is loaded at 390 px, measured
 * once its islands are hydrated and nothing says it is loading, then widened to 1280 px and measured
 * again (the layout answers the window's width, the chart and the map listen for it).
 */

type Visit = { path: string; status?: number };

const widths = [390, 1280] as const;

type DemoIds = { cobbleRidge: string; request: string; landownerCard: string; foragerCard: string | null; stewardCard: string | null; walter: string; species: string };

async function demoIds(): Promise<DemoIds> {
  const sql = connect(process.env.DATABASE_URL ?? '', { max: 1, onnotice: () => {} });
  try {
    const one = async (rows: Promise<{ id: string }[]>) => (await rows)[0]?.id ?? null;
    const cobbleRidge = await one(sql`select p.id from parcels p join users u on u.id = p.owner_id where u.email = 'landowner@example.org' and p.name = 'Cobble Ridge Lot'`);
    // Any permit on Walter's land opens as a request of his; one still asked for, if there is one.
    const request = await one(sql`select pm.id from permits pm join parcels p on p.id = pm.parcel_id join users u on u.id = p.owner_id
      where u.email = 'landowner@example.org' order by (pm.state = 'requested') desc, pm.created_at limit 1`);
    const landownerCard = await one(sql`select pm.id from permits pm join parcels p on p.id = pm.parcel_id join users u on u.id = p.owner_id
      where u.email = 'landowner@example.org' and pm.state = 'active' order by pm.created_at limit 1`);
    const foragerCard = await one(sql`select pm.id from permits pm join users u on u.id = pm.holder_user_id where u.email = 'forager@example.org' and pm.state = 'active' order by pm.created_at limit 1`);
    const stewardCard = await one(sql`select pm.id from permits pm join club_memberships cm on cm.club_id = pm.holder_club_id join users u on u.id = cm.user_id
      where u.email = 'steward@example.org' and cm.state = 'active' and pm.state = 'active' order by pm.created_at limit 1`);
    const walter = await one(sql`select id from users where email = 'landowner@example.org'`);
    const species = await one(sql`select id from species where common_name = 'Chaga'`);
    if (!cobbleRidge || !request || !landownerCard || !walter || !species) throw new Error('the demo data is not in the test database');
    return { cobbleRidge, request, landownerCard, foragerCard, stewardCard, walter, species };
  } finally {
    await sql.end();
  }
}

/** The pages each account opens. The foragers' cards depend on the demo's permits still being active on the day the test runs. */
function pagesOf(ids: DemoIds): Record<string, Visit[]> {
  const parcel = `/land/${ids.cobbleRidge}`;
  return {
    'signed out': [
      { path: '/' }, { path: '/sign-in' }, { path: '/sign-in/check-email?email=someone%40example.org' },
      { path: '/sign-in/problem?error=Verification', status: 400 }, { path: '/sign-up' }, { path: '/verify' }, { path: '/api-reference' },
      { path: '/forbidden', status: 403 }, { path: '/a-page-that-is-not-here', status: 404 }, { path: '/mailbox' },
    ],
    'forager@example.org': [
      { path: '/' }, { path: '/field' }, { path: '/my-permits' }, { path: '/ledger' }, { path: '/club' }, { path: '/catalogue' },
      ...(ids.foragerCard ? [{ path: `/permits/${ids.foragerCard}/card` }] : []),
      { path: '/payments/cancelled' }, { path: '/payments/done?session_id=cs_not_a_session', status: 404 }, { path: '/settings' },
    ],
    'landowner@example.org': [
      { path: '/' }, { path: '/land' }, { path: '/land/new' },
      ...['', '/rules', '/closures', '/terms', '/permits', '/tallies', '/settings'].map((section) => ({ path: `${parcel}${section}` })),
      { path: '/requests' }, { path: `/requests/${ids.request}` }, { path: `/reports/season/${ids.cobbleRidge}` },
      { path: `/permits/${ids.landownerCard}/card` }, { path: '/catalogue' }, { path: '/settings' },
    ],
    'steward@example.org': [
      { path: '/' }, { path: '/club' }, { path: '/my-permits' }, { path: '/field' }, { path: '/ledger' }, { path: '/catalogue' },
      ...(ids.stewardCard ? [{ path: `/permits/${ids.stewardCard}/card` }] : []),
      { path: '/settings' },
    ],
    'admin@example.org': [
      { path: '/' }, { path: '/accounts' }, { path: `/accounts/${ids.walter}` }, { path: '/catalogue' },
      { path: '/catalogue/species/new' }, { path: `/catalogue/species/${ids.species}` },
    ],
  };
}

/**
 * Waits until the islands are hydrated (Astro drops `ssr` from a hydrated island) and nothing on the
 * page says it is loading. An island hydrated only once seen (`client:visible`, the map) is scrolled to.
 */
async function settle(page: Page) {
  await page.waitForLoadState('load');
  // An island is `display: contents`: what Astro watches coming into view is its first child.
  await page.evaluate(() => document.querySelectorAll('astro-island[ssr][client="visible"]').forEach((island) => (island.firstElementChild ?? island).scrollIntoView()));
  await expect(page.locator('astro-island[ssr]')).toHaveCount(0);
  await expect(page.locator('[data-status="loading"]')).toHaveCount(0);
  await expect(page.locator('main').getByText(/^Loading\b/)).toHaveCount(0);
}

/** How far the page is wider than the window, and what sticks out past its right edge, so a failure says where to look. */
function overflow(page: Page) {
  return page.evaluate(() => {
    const excess = document.documentElement.scrollWidth - window.innerWidth;
    if (excess <= 0) return '';
    const out = [...document.querySelectorAll('body *')]
      .filter((el) => el.getBoundingClientRect().right > window.innerWidth + 0.5)
      .slice(-4)
      .map((el) => `<${el.tagName.toLowerCase()} class="${el.getAttribute('class') ?? ''}"> right edge ${Math.round(el.getBoundingClientRect().right)} px`);
    return `${excess} px wider than the window; past its edge: ${out.join('; ')}`;
  });
}

async function pageFor(browser: Browser, account: string) {
  const context = await browser.newContext({ ...(account === 'signed out' ? {} : { storageState: sessionFile(account) }), viewport: { width: widths[0], height: 900 } });
  return context.newPage();
}

let pages: Record<string, Visit[]> = {};
test.beforeAll(async () => {
  pages = pagesOf(await demoIds());
});

for (const account of ['signed out', 'forager@example.org', 'landowner@example.org', 'steward@example.org', 'admin@example.org']) {
  test(`given ${account === 'signed out' ? 'no one signed in' : account}, every page it may open is no wider than a 390 px or a 1280 px window`, async ({ browser }) => {
    test.setTimeout(60_000);
    const page = await pageFor(browser, account);
    const found: string[] = [];
    for (const visit of pages[account] ?? []) {
      await page.setViewportSize({ width: widths[0], height: 900 });
      const response = await page.goto(visit.path);
      expect(response?.status(), visit.path).toBe(visit.status ?? 200);
      // Signed in, a page it may open never sends it to sign in or to Forbidden.
      expect(new URL(page.url()).pathname, visit.path).toBe(new URL(visit.path, 'http://x').pathname);
      await settle(page);
      for (const width of widths) {
        if (width !== widths[0]) await page.setViewportSize({ width, height: 900 });
        // A layout may take a frame or two to answer a new width: look again for up to 2 s before saying what sticks out.
        let wide = await overflow(page);
        for (let tries = 0; wide && tries < 10; tries += 1) {
          await page.waitForTimeout(200);
          wide = await overflow(page);
        }
        if (wide) found.push(`${visit.path} at ${width} px: ${wide}`);
      }
    }
    expect(found).toEqual([]);
    await page.context().close();
  });
}
