import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('../..', import.meta.url));

export type PaymentsFakeSettings = { port: number; store: string; webhookUrl: string; localToken: string; secretKey: string; webhookSecret: string };

/** Starts the local payments fake as `npm start` does (scripts/payments-fake.ts) and resolves once it says it is listening. */
export async function startPaymentsFake({ port, store, webhookUrl, localToken, secretKey, webhookSecret }: PaymentsFakeSettings): Promise<ChildProcess> {
  const child = spawn(join(root, 'node_modules', '.bin', 'tsx'), ['scripts/payments-fake.ts'], {
    cwd: root,
    env: { ...process.env, PAYMENTS_FAKE_PORT: String(port), PAYMENTS_FAKE_STORE: store, PAYMENTS_WEBHOOK_URL: webhookUrl, LOCAL_FAKES_TOKEN: localToken, STRIPE_SECRET_KEY: secretKey, STRIPE_WEBHOOK_SECRET: webhookSecret },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  await new Promise<void>((resolve, reject) => {
    child.stdout?.on('data', (chunk: Buffer) => chunk.toString().includes('local payments fake') && resolve());
    child.once('exit', (code) => reject(new Error(`the payments fake exited with ${code}`)));
  });
  return child;
}

/** Stops the fake (SIGTERM) and resolves once it has exited; nothing to do when it is not running. */
export async function stopPaymentsFake(child: ChildProcess | undefined) {
  if (!child || child.exitCode !== null) return;
  const exited = new Promise((resolve) => child.once('exit', resolve));
  child.kill('SIGTERM');
  await exited;
}
