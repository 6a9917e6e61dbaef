/**
 * The API contract for people and tools: /openapi.json (schema/openapi.yaml as JSON) and /docs,
 * an OpenAPI explorer (swagger-ui-express, assets served from our own origin). The explorer page
 * loads its scripts and styles from /docs/ and the document from /openapi.json, so it works
 * under the CSP of app.ts unchanged (scripts 'self', inline styles allowed, data: images); the
 * online spec validator badge is switched off because it would call an outside service.
 */
import { Router } from 'express';
import swaggerUi from 'swagger-ui-express';
import { openApiDocument } from './document.js';

export function docsRoutes(): Router {
  const router = Router();
  const document = openApiDocument();
  const body = JSON.stringify(document);
  router.get('/openapi.json', (_req, res) => {
    res.setHeader('Cache-Control', 'no-cache');
    res.type('application/json').send(body);
  });

  const options = {
    swaggerUrl: '/openapi.json',
    customSiteTitle: 'Fermiwell API reference',
    swaggerOptions: { validatorUrl: null, displayRequestDuration: true, defaultModelsExpandDepth: 0 },
  };
  // relative asset URLs need the trailing slash
  router.get('/docs', (req, res, next) => (req.originalUrl === '/docs' ? res.redirect(301, '/docs/') : next()));
  router.use('/docs', swaggerUi.serveFiles(undefined, options), swaggerUi.setup(undefined, options));
  return router;
}
