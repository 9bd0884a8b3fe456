// Cross-site request forgery: a browser sends the session cookie with a form or fetch from any
// site, so a state-changing request that rides on the cookie must come from the app's own pages.
// Browsers say where a request comes from in Sec-Fetch-Site (Fetch Metadata, W3C) and Origin
// (RFC 6454, sent with every non-GET fetch and form post); when neither is present the caller is
// not a browser and has no ambient cookie to abuse (the rule of Go's net/http
// CrossOriginProtection, common practice). Requests with an Authorization header (CI tokens)
// carry their credential explicitly and are not affected.
import type { RequestHandler } from 'express';
import type { AppContext } from '../context';

const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);

export function sameOriginOnly(ctx: AppContext): RequestHandler {
  const publicOrigin = new URL(ctx.config.publicUrl).origin;
  return (req, res, next) => {
    if (SAFE.has(req.method) || req.get('authorization')) return next();
    const site = req.get('sec-fetch-site');
    const origin = req.get('origin');
    let ok = true;
    if (site) {
      // 'none': typed into the address bar or a bookmark; 'same-site' is a sibling subdomain: refused.
      ok = site === 'same-origin' || site === 'none';
    } else if (origin) {
      // The public URL, or the address the request was sent to (a dev proxy passes Host through).
      ok = origin === publicOrigin || origin === `${req.protocol}://${req.get('host')}`;
    }
    if (ok) return next();
    res.status(403).json({
      error: {
        code: 'cross-origin',
        message: 'This request came from another site; the server accepts changes only from its own pages (or with a CI token).',
      },
    });
  };
}
