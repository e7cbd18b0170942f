/** The HTML frame of Tallywood's e-mails; apart from mail.ts, which reads the server's settings, so code tested outside Astro can compose mail. */
const escape = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

/** The one frame every Tallywood e-mail's HTML part shares. */
export function mailHtml({ heading, paragraphs, action }: { heading: string; paragraphs: string[]; action?: { label: string; url: string } }) {
  const body = paragraphs.map((p) => `<p style="margin:0 0 12px">${escape(p)}</p>`).join('');
  const button = action
    ? `<p style="margin:20px 0"><a href="${escape(action.url)}" style="background:#3d6437;color:#fff;padding:10px 18px;border-radius:6px;text-decoration:none;font-weight:600">${escape(action.label)}</a></p><p style="margin:0 0 12px;font-size:13px;color:#5c4431">Or paste this address into your browser: ${escape(action.url)}</p>`
    : '';
  return `<!doctype html><html><body style="font-family:'Work Sans',Arial,sans-serif;color:#1f2f1e;background:#f8f5f1;padding:24px"><div style="max-width:520px;margin:auto;background:#fff;border-radius:8px;padding:24px"><p style="margin:0 0 16px;font-weight:700;color:#3d6437">Tallywood</p><h1 style="font-size:20px;margin:0 0 16px">${escape(heading)}</h1>${body}${button}</div></body></html>`;
}
