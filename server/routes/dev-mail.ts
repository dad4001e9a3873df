import { Router } from 'express';
import { readMailbox } from '../mail/sink';

const escape = (s: string) =>
  s.replace(
    /[&<>"']/g,
    (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!,
  );

const linkify = (s: string) => escape(s).replace(/(https?:\/\/[^\s<]+)/g, '<a href="$1">$1</a>');

/** Outside production only: the messages the local mail sink has received, newest first. */
export function devMailRoutes(dir: string): Router {
  const router = Router();
  router.get('/', (_req, res) => {
    const mails = readMailbox(dir);
    const items = mails
      .map(
        (m) =>
          `<article><h2>${escape(m.subject)}</h2><p class="meta">to ${escape(m.to)} · ${escape(m.receivedAt)}</p>` +
          `<pre>${linkify(m.body)}</pre></article>`,
      )
      .join('\n');
    res.type('html').send(`<!doctype html><html lang="en"><head><meta charset="utf-8">
<title>Local mail sink · Fairsheet</title>
<style>body{font-family:system-ui,sans-serif;max-width:860px;margin:2rem auto;padding:0 1rem;color:#1d2733}
article{border:1px solid #c9d3dc;border-radius:6px;padding:0.75rem 1rem;margin:1rem 0}
h2{font-size:1.05rem;margin:0}.meta{color:#5a6b7b;font-size:0.85rem}pre{white-space:pre-wrap}</style></head>
<body><h1>Local mail sink</h1><p>Mail the app sent while no SMTP service is configured (${mails.length} messages, newest first).</p>
${items || '<p>No mail yet.</p>'}</body></html>`);
  });
  router.get('/messages.json', (_req, res) => {
    res.json({ messages: readMailbox(dir) });
  });
  return router;
}
