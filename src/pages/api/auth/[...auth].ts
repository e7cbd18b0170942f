import { Auth } from '@auth/core';
import type { APIRoute } from 'astro';
import { authConfig, authRoutesOpenToBrowsers } from '../../../server/auth';
import { json } from '../../../server/http';

export const prerender = false;

const notHere = () => json({ error: { code: 'not-found', message: 'There is nothing here. Ask for a sign-in link at /sign-in.' } }, 404);

/**
 * Only the e-mailed sign-in link reaches Auth.js from outside, matched on the exact path the
 * request names (`authRoutesOpenToBrowsers`); every other spelling or action is a 404.
 */
const open: APIRoute = ({ request }) => {
  const path = new URL(request.url).pathname;
  return authRoutesOpenToBrowsers.has(`${request.method} ${path}`) ? Auth(request, authConfig) : notHere();
};

export const GET = open;
export const POST = open;
