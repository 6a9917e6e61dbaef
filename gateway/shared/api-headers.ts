/**
 * Security headers of the EOS API's answers (JSON or binary, never rendered by a browser): the set
 * the OWASP REST Security Cheat Sheet ("Security Headers") recommends for API responses, instead of
 * helmet's set for HTML pages (twelve headers, a long page policy) that the dashboard and the other
 * routes keep. Fewer and shorter headers are measurably cheaper on the single-point hot path.
 * Content-Type is set by each answer; a POST answer is not stored by caches without explicit
 * freshness (RFC 9111 §3), so no Cache-Control is needed.
 */
import type { RequestHandler } from 'express';

export const API_SECURITY_HEADERS: ReadonlyArray<readonly [string, string]> = [
  // nothing may load from or frame an API answer
  ['Content-Security-Policy', "default-src 'none'; frame-ancestors 'none'"],
  // helmet's value for the rest of the site (one year, subdomains)
  ['Strict-Transport-Security', 'max-age=31536000; includeSubDomains'],
  ['X-Content-Type-Options', 'nosniff'],
  ['X-Frame-Options', 'DENY'],
  ['Referrer-Policy', 'no-referrer'],
];

export function apiSecurityHeaders(): RequestHandler {
  return (_req, res, next) => {
    for (const [name, value] of API_SECURITY_HEADERS) res.setHeader(name, value);
    next();
  };
}
