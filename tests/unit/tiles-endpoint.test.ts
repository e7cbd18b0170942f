import type { APIContext } from 'astro';
import { describe, expect, it } from 'vitest';
import { GET } from '../../src/pages/tiles/[z]/[x]/[y].svg';

/** The endpoint reads only `params`; the rest of Astro's context is not needed to draw a tile. */
const get = (params: Record<string, string>) => GET({ params } as unknown as APIContext) as Promise<Response>;

describe('GET /tiles/{z}/{x}/{y}.svg', () => {
  it('given a tile in range, it answers an SVG that caches for a year, immutable', async () => {
    const response = await get({ z: '13', x: '2438', y: '2980' });
    expect(response.status).toBe(200);
    expect(response.headers.get('content-type')).toBe('image/svg+xml; charset=utf-8');
    expect(response.headers.get('cache-control')).toBe('public, max-age=31536000, immutable');
    expect(await response.text()).toMatch(/^<svg xmlns="http:\/\/www.w3.org\/2000\/svg" width="256" height="256"/);
  });

  it('given a zoom past 22 or an x outside the grid, it answers 404 with the not-found error shape', async () => {
    for (const params of [{ z: '23', x: '0', y: '0' }, { z: '2', x: '4', y: '0' }, { z: 'a', x: '0', y: '0' }]) {
      const response = await get(params);
      expect(response.status, JSON.stringify(params)).toBe(404);
      const body = (await response.json()) as { error: { code: string; message: string } };
      expect(body.error.code).toBe('not-found');
      expect(body.error.message).toMatch(/zoom runs from 0 to 22/);
    }
  });
});
