import type { APIContext } from 'astro';
import { sql } from 'drizzle-orm';
import postgres from 'postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { endpoint, json } from '../../src/server/http';
import { createThrowawayDatabase, type ThrowawayDatabase } from './throwaway-database';

/**
 * A write that committed and then lost its connection before the answer came back: the client must
 * hear that the outcome is unknown (and how to find out), never "nothing was changed". The
 * connection is really broken, by pg_terminate_backend from another session (SQLSTATE 57P01,
 * admin_shutdown, PostgreSQL manual Appendix A).
 */
let scratch: ThrowawayDatabase;
let admin: postgres.Sql;

beforeAll(async () => {
  scratch = await createThrowawayDatabase('lost_connection');
  await scratch.db.execute(sql`create table notes (id serial primary key, body text not null)`);
  const url = new URL(process.env.TEST_ADMIN_DATABASE_URL ?? '');
  url.pathname = `/${scratch.name}`;
  admin = postgres(url.toString(), { max: 1, onnotice: () => {} });
});

afterAll(async () => {
  await admin?.end({ timeout: 5 });
  await scratch?.drop();
});

const contextFor = (method: string) => ({ request: new Request('http://127.0.0.1/api/anything', { method }) }) as unknown as APIContext;

/** Saves a note (committed at once), then waits on its connection, which another session terminates. */
const saveThenLoseTheConnection = endpoint(async () => {
  const connection = await scratch.db.$client.reserve();
  try {
    await connection`insert into notes (body) values ('saved before the connection broke')`;
    const [row] = await connection<{ pid: number }[]>`select pg_backend_pid() as pid`;
    setTimeout(() => admin`select pg_terminate_backend(${row?.pid ?? 0})`.then(() => {}), 300);
    await connection`select pg_sleep(5)`;
  } finally {
    connection.release();
  }
  return json({ saved: true });
});

describe('a connection lost after a write committed', () => {
  it('answers 503 result-unknown to a POST, telling the client to look or resend with the same key; the write is kept', async () => {
    const response = await saveThenLoseTheConnection(contextFor('POST'));
    expect(response.status).toBe(503);
    const { error } = await response.json();
    expect(error.code).toBe('result-unknown');
    expect(error.message).toMatch(/cannot tell whether it was/);
    expect(error.message).toMatch(/same idempotency key/);
    expect(error.message).not.toMatch(/nothing was changed/i);
    expect(response.headers.get('retry-after')).toBe('5');
    const [{ n }] = (await admin`select count(*)::int as n from notes`) as unknown as { n: number }[];
    expect(n).toBe(1);
  });
});
