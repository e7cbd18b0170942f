// The local stand-in for a hosted mail service: an SMTP server that accepts every message and
// keeps it, and a small HTTP API that the app's mailbox page reads. Messages survive restarts
// in MAIL_CATCHER_STORE.
//
// Like a provider that honours an idempotency key, it keeps one message per Message-ID: a message
// delivered again under a Message-ID it holds is counted (`deliveries`), not kept twice. The app makes
// each Message-ID from its outbox row (src/server/jobs/send-mail.ts), so a mail sent again after a crash
// shows once. For tests of such crashes it can hold messages after their DATA has arrived, before it
// answers (POST /__hold; DELETE /__hold accepts those held and stops holding; GET /__hold counts them).
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:http';
import { join } from 'node:path';
import { simpleParser, type ParsedMail } from 'mailparser';
import { SMTPServer } from 'smtp-server';
import { localRequestProblem } from './lib/local-fake.mjs';

/** An attachment as it arrived: its bytes in base64, so any file survives the JSON store. */
type Attachment = { filename: string; contentType: string; size: number; contentBase64: string };
type Caught = {
  id: string;
  /** The Message-ID header, angle brackets included; null when the message had none. */
  messageId: string | null;
  /** How many times this message arrived: more than 1 when a sender delivered it again under its Message-ID. */
  deliveries: number;
  from: string;
  to: string[];
  subject: string;
  date: string;
  text: string;
  html: string | null;
  attachments: Attachment[];
};

const smtpPort = Number(process.env.MAIL_CATCHER_SMTP_PORT ?? 2525);
const httpPort = Number(process.env.MAIL_CATCHER_HTTP_PORT ?? 2580);
const store = process.env.MAIL_CATCHER_STORE ?? join(process.cwd(), '.local', 'mail');
const file = join(store, 'messages.json');
const keep = 500;
/** Every endpoint shows or clears sign-in links, so each needs the local token (scripts/lib/local-fake.mjs). */
const token = process.env.LOCAL_FAKES_TOKEN;

mkdirSync(store, { recursive: true });
let messages: Caught[] = existsSync(file) ? (JSON.parse(readFileSync(file, 'utf8')) as Caught[]).map((m) => ({ ...m, messageId: m.messageId ?? null, deliveries: m.deliveries ?? 1 })) : [];
let counter = messages.length;

function addresses(value: unknown): string[] {
  const list = Array.isArray(value) ? value : value ? [value] : [];
  return list.flatMap((a: { value?: { address?: string }[] }) => (a.value ?? []).map((v) => v.address ?? '')).filter(Boolean);
}

/** Keeps a message that has arrived: once per Message-ID, counting each delivery. */
function keepMessage(mail: ParsedMail) {
  const messageId = mail.messageId ?? null;
  const known = messageId === null ? undefined : messages.find((m) => m.messageId === messageId);
  if (known) {
    known.deliveries += 1;
  } else {
    counter += 1;
    messages = [
      {
        id: String(counter),
        messageId,
        deliveries: 1,
        from: mail.from?.text ?? '',
        to: addresses(mail.to),
        subject: mail.subject ?? '',
        date: (mail.date ?? new Date()).toISOString(),
        text: mail.text ?? '',
        html: typeof mail.html === 'string' ? mail.html : null,
        attachments: mail.attachments.map((a) => ({ filename: a.filename ?? 'attachment', contentType: a.contentType, size: a.size, contentBase64: a.content.toString('base64') })),
      },
      ...messages,
    ].slice(0, keep);
  }
  writeFileSync(file, JSON.stringify(messages));
}

/** While true, a message whose DATA has arrived waits, unanswered, in `held` until DELETE /__hold. */
let holding = false;
const held: (() => void)[] = [];

const smtp = new SMTPServer({
  authOptional: true,
  disabledCommands: ['AUTH', 'STARTTLS'],
  logger: false,
  size: 10 * 1024 * 1024,
  onData(stream, _session, callback) {
    simpleParser(stream)
      .then((mail) => {
        const accept = () => {
          keepMessage(mail);
          callback();
        };
        if (holding) held.push(accept);
        else accept();
      })
      .catch((error: Error) => callback(error));
  },
});

const http = createServer((req, res) => {
  const problem = localRequestProblem(req, { port: httpPort, token, needsToken: true });
  if (problem) {
    res.writeHead(problem.status, { 'content-type': 'application/json' }).end(JSON.stringify({ error: problem.message }));
    return;
  }
  const url = new URL(req.url ?? '/', `http://127.0.0.1:${httpPort}`);
  if (url.pathname === '/messages' && req.method === 'GET') {
    const to = url.searchParams.get('to')?.toLowerCase();
    const list = to ? messages.filter((m) => m.to.some((a) => a.toLowerCase() === to)) : messages;
    res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify(list));
    return;
  }
  if (url.pathname === '/__hold') {
    if (req.method === 'POST') holding = true;
    if (req.method === 'DELETE') {
      holding = false;
      // Accepted even when the sender has gone: the message had arrived whole.
      for (const accept of held.splice(0)) accept();
    }
    res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify({ holding, held: held.length }));
    return;
  }
  if (url.pathname === '/messages' && req.method === 'DELETE') {
    messages = [];
    writeFileSync(file, '[]');
    res.writeHead(204).end();
    return;
  }
  res.writeHead(404, { 'content-type': 'application/json' }).end('{"error":"not found"}');
});

smtp.listen(smtpPort, '127.0.0.1', () => console.log(`local mail catcher: SMTP on 127.0.0.1:${smtpPort}`));
http.listen(httpPort, '127.0.0.1', () => console.log(`local mail catcher: API on http://127.0.0.1:${httpPort}/messages`));

function shutdown() {
  smtp.close(() => http.close(() => process.exit(0)));
  setTimeout(() => process.exit(0), 2000).unref();
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
