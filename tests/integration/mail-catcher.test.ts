import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { createServer, request } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import nodemailer from 'nodemailer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

/**
 * The local mail catcher holds every sign-in link sent under `npm start`. A web page can reach a
 * loopback server through a host name it controls that resolves to 127.0.0.1 (DNS rebinding, a
 * common attack on local development servers), so the catcher checks the Host header, and every
 * HTTP endpoint needs the local token that npm start shares with the app only.
 */
const root = fileURLToPath(new URL('../..', import.meta.url));
const token = 'mail-test-local-token';
let store: string;
let catcher: ChildProcess;
let smtpPort: number;
let httpPort: number;

async function freePort() {
  const probe = createServer();
  await new Promise<void>((resolve) => probe.listen(0, '127.0.0.1', resolve));
  const { port } = probe.address() as AddressInfo;
  await new Promise((resolve) => probe.close(resolve));
  return port;
}

/** A raw request, so the Host header is the one given (fetch sets its own). */
function raw(method: string, headers: Record<string, string>): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    request(`http://127.0.0.1:${httpPort}/messages`, { method, headers }, (res) => {
      let body = '';
      res.on('data', (chunk) => (body += chunk));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body }));
    }).on('error', reject).end();
  });
}

const here = () => ({ host: `127.0.0.1:${httpPort}` });

beforeAll(async () => {
  store = await mkdtemp(join(tmpdir(), 'tallywood-mail-'));
  [smtpPort, httpPort] = [await freePort(), await freePort()];
  catcher = spawn(join(root, 'node_modules', '.bin', 'tsx'), ['scripts/mail-catcher.ts'], {
    cwd: root,
    env: { ...process.env, MAIL_CATCHER_SMTP_PORT: String(smtpPort), MAIL_CATCHER_HTTP_PORT: String(httpPort), MAIL_CATCHER_STORE: store, LOCAL_FAKES_TOKEN: token },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  await new Promise<void>((resolve, reject) => {
    catcher.stdout?.on('data', (chunk: Buffer) => chunk.toString().includes('API on') && resolve());
    catcher.once('exit', (code) => reject(new Error(`the mail catcher exited with ${code}`)));
  });
  await nodemailer
    .createTransport({ host: '127.0.0.1', port: smtpPort, secure: false, ignoreTLS: true })
    .sendMail({ from: 'app@tallywood.example', to: 'someone@example.org', subject: 'Your sign-in link', text: 'https://example.org/secret-link' });
});

afterAll(async () => {
  const exited = new Promise((resolve) => catcher.once('exit', resolve));
  catcher.kill('SIGTERM');
  await exited;
  await rm(store, { recursive: true, force: true });
});

describe('the local mail catcher', () => {
  it('shows the caught mail to a request with the local token, addressed to 127.0.0.1', async () => {
    const shown = await raw('GET', { ...here(), 'x-local-token': token });
    expect(shown.status).toBe(200);
    expect(JSON.parse(shown.body)).toMatchObject([{ to: ['someone@example.org'], subject: 'Your sign-in link' }]);
  });

  it('refuses a request addressed to another host name with 421, even with the token', async () => {
    for (const host of ['attacker.example', `attacker.example:${httpPort}`, `127.0.0.1.attacker.example:${httpPort}`]) {
      const answer = await raw('GET', { host, 'x-local-token': token });
      expect(answer.status, host).toBe(421);
      expect(answer.body).not.toContain('secret-link');
    }
  });

  it('refuses to show or clear the mail without the right token (401), and keeps it', async () => {
    for (const headers of [here(), { ...here(), 'x-local-token': 'guessed' }, { ...here(), 'x-local-token': `${token}x` }]) {
      const shown = await raw('GET', headers);
      expect(shown.status).toBe(401);
      expect(shown.body).not.toContain('secret-link');
      expect((await raw('DELETE', headers)).status).toBe(401);
    }
    expect(JSON.parse((await raw('GET', { ...here(), 'x-local-token': token })).body)).toHaveLength(1);
  });
});

describe('attachments', () => {
  it('keeps a CSV sent as an attachment, byte for byte, with its name and type', async () => {
    const csv = 'species,taken\r\n"Oyster mushroom, golden",1.2 kg\r\nRamps,30 plants\r\n';
    await nodemailer
      .createTransport({ host: '127.0.0.1', port: smtpPort, secure: false, ignoreTLS: true })
      .sendMail({ from: 'app@tallywood.example', to: 'owner@example.org', subject: 'A report', text: 'See the file.', attachments: [{ filename: 'report.csv', contentType: 'text/csv; charset=utf-8', content: csv }] });
    const shown = JSON.parse((await raw('GET', { ...here(), 'x-local-token': token })).body) as { subject: string; attachments: { filename: string; contentType: string; contentBase64: string }[] }[];
    const report = shown.find((m) => m.subject === 'A report');
    expect(report?.attachments).toHaveLength(1);
    expect(report?.attachments[0]).toMatchObject({ filename: 'report.csv', contentType: 'text/csv' });
    expect(Buffer.from(report?.attachments[0]?.contentBase64 ?? '', 'base64').toString('utf8')).toBe(csv);
  });
});

describe('one message per Message-ID', () => {
  it('given one message delivered twice under its Message-ID, it keeps it once and counts both deliveries; another Message-ID is another message', async () => {
    const transport = nodemailer.createTransport({ host: '127.0.0.1', port: smtpPort, secure: false, ignoreTLS: true });
    const mail = { from: 'app@tallywood.example', to: 'twice@example.org', subject: 'Sent again after a crash', text: 'Same mail.' };
    await transport.sendMail({ ...mail, messageId: '<row-1@tallywood.example>' });
    await transport.sendMail({ ...mail, messageId: '<row-1@tallywood.example>' });
    await transport.sendMail({ ...mail, messageId: '<row-2@tallywood.example>' });
    const shown = JSON.parse((await raw('GET', { ...here(), 'x-local-token': token })).body) as { messageId: string; deliveries: number; to: string[] }[];
    const mine = shown.filter((m) => m.to.includes('twice@example.org'));
    expect(mine.map((m) => [m.messageId, m.deliveries]).sort()).toEqual([['<row-1@tallywood.example>', 2], ['<row-2@tallywood.example>', 1]]);
  });
});
