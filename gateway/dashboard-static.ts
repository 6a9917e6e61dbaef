/**
 * Serves the built dashboard (dist/dashboard/browser) with history-API fallback: any GET that is not
 * an API route and not a file answers index.html, so deep links like /keys work on reload.
 */
import fs from 'node:fs';
import path from 'node:path';
import express, { Router } from 'express';

/** Paths the gateway owns; never answered with the dashboard. */
const API_PREFIXES = ['/v1', '/graphql', '/docs', '/openapi.json', '/metrics', '/healthz', '/readyz', '/problems'];

export function dashboardRoutes(dir: string): Router {
  const router = Router();
  const index = path.join(dir, 'index.html');
  router.use(express.static(dir, { index: false, maxAge: '1h', immutable: false }));
  router.get(/.*/, (req, res, next) => {
    if (API_PREFIXES.some((p) => req.path === p || req.path.startsWith(p + '/'))) return next();
    if (!req.accepts('html')) return next();
    if (!fs.existsSync(index)) {
      // the folder itself stays out of the answer (no server paths to visitors): the variable names it
      res
        .status(503)
        .type('text/plain')
        .send('The dashboard is not built where this gateway looks for it (DASHBOARD_DIR, by default dist/dashboard/browser): run `npm start` (it builds it) or `npm run build`, or set DASHBOARD_DIR to the build\'s browser/ folder.');
      return;
    }
    res.setHeader('Cache-Control', 'no-cache');
    // relative to `root`: send() refuses a path with a dot-folder in it (e.g. FW_DASHBOARD_DIST under .data/)
    res.sendFile('index.html', { root: dir });
  });
  return router;
}
