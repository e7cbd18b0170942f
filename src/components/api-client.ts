/** The error shape every Tallywood endpoint answers with. */
export type ApiError = { error: { code: string; message: string; field?: string } };

export async function postJson(url: string, body: unknown): Promise<{ ok: true; data: unknown } | { ok: false; status: number; error: ApiError['error'] }> {
  let response: Response;
  try {
    response = await fetch(url, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
  } catch {
    return { ok: false, status: 0, error: { code: 'offline', message: 'No connection to Tallywood. Check your signal and try again.' } };
  }
  const data = await response.json().catch(() => null);
  if (response.ok) return { ok: true, data };
  const error = (data as ApiError | null)?.error ?? { code: 'unknown', message: `The server answered ${response.status}. Try again.` };
  return { ok: false, status: response.status, error };
}
