/** The error shape every Tallywood endpoint answers with. */
export type ApiError = { error: { code: string; message: string; field?: string } };

export type ApiResult = { ok: true; data: unknown } | { ok: false; status: number; error: ApiError['error'] };

export function postJson(url: string, body: unknown): Promise<ApiResult> {
  return sendJson('POST', url, body);
}

/**
 * Sends JSON and reads the answer; a network failure reads like any other error (code `offline`).
 * With `timeoutMs`, a request still unanswered then counts as no connection (a phone with one bar
 * can hang for minutes).
 */
export async function sendJson(method: string, url: string, body?: unknown, { timeoutMs }: { timeoutMs?: number } = {}): Promise<ApiResult> {
  let response: Response;
  try {
    response = await fetch(url, {
      method,
      headers: body === undefined ? {} : { 'content-type': 'application/json' },
      body: body === undefined ? undefined : JSON.stringify(body),
      signal: timeoutMs ? AbortSignal.timeout(timeoutMs) : undefined,
    });
  } catch {
    return { ok: false, status: 0, error: { code: 'offline', message: 'No connection to Tallywood. Check your signal and try again.' } };
  }
  const data = await response.json().catch(() => null);
  if (response.ok) return { ok: true, data };
  const error = (data as ApiError | null)?.error ?? { code: 'unknown', message: `The server answered ${response.status}. Try again.` };
  return { ok: false, status: response.status, error };
}
