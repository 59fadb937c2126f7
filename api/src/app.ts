import { existsSync } from 'node:fs';
import { join } from 'node:path';
import express, { type Express } from 'express';
import helmet from 'helmet';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { pinoHttp } from 'pino-http';
import type { Config } from './config.ts';
import { AppError, errorMiddleware } from './errors/index.ts';
import { createLogger } from './logger.ts';
import { apiRoutes } from './routes/index.ts';
import { FitRunner, type FitRunnerLike } from './services/datalogs/fit-runner.ts';
import { PullRunner, type PullRunnerLike } from './services/pull/pull-runner.ts';
import type { SweepQueue } from './services/sweeps.ts';

export interface AppDeps {
  knex: Knex;
  queue: SweepQueue;
  config: Config;
  logger?: Logger;
  /** Computes pulls; made from the config when left out (its idle threads never hold the process open). */
  pulls?: PullRunnerLike;
  /** Computes datalog fits; made from the config when left out (idle threads never hold the process open either). */
  fits?: FitRunnerLike;
}

export function createApp(deps: AppDeps): Express {
  const { config, knex, queue } = deps;
  const logger = deps.logger ?? createLogger(config);
  const pulls = deps.pulls ?? new PullRunner({ threads: config.pullThreads, timeLimitMs: config.pullTimeLimitMs });
  const fits = deps.fits ?? new FitRunner({ threads: config.fitThreads, timeLimitMs: config.fitTimeLimitMs });

  const app = express();
  app.disable('x-powered-by');

  // Security headers on every answer (helmet): the app may not be framed by another origin, content types are not
  // sniffed, no referrer leaves it, and the page runs under a Content-Security-Policy that lets in only what the
  // built app itself needs. Everything is served from this origin (fonts too, DESIGN.md: no CDN). Vuetify and Plotly
  // set style attributes and inject style sheets, so styles allow inline; Plotly renders hover labels and exported
  // images from data: and blob: URLs; the pull worker is a module script of this origin.
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: false,
        directives: {
          defaultSrc: ["'self'"],
          baseUri: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          workerSrc: ["'self'", 'blob:'],
          objectSrc: ["'none'"],
          frameAncestors: ["'none'"],
          formAction: ["'self'"],
        },
      },
      // The app loads nothing cross-origin, but an embedder policy would break a shop's own reverse proxies for little.
      crossOriginEmbedderPolicy: false,
      referrerPolicy: { policy: 'no-referrer' },
      frameguard: { action: 'deny' },
      // Served over plain HTTP on loopback by `npm start`; HSTS belongs to the TLS front a deployment puts before it.
      strictTransportSecurity: false,
    }),
  );

  app.use(
    pinoHttp({
      logger,
      // Bodies and headers are never logged: they carry passwords and bearer tokens.
      serializers: {
        req: (req: { id?: unknown; method?: string; url?: string }) => ({ id: req.id, method: req.method, url: req.url }),
        res: (res: { statusCode?: number }) => ({ statusCode: res.statusCode }),
      },
      customLogLevel: (_req, res, error) => (error || res.statusCode >= 500 ? 'error' : res.statusCode >= 400 ? 'warn' : 'info'),
    }),
  );

  app.use('/api', apiRoutes({ knex, queue, config, logger, pulls, fits }));

  const indexHtml = join(config.webDist, 'index.html');
  if (existsSync(indexHtml)) {
    app.use(express.static(config.webDist, { index: false, maxAge: '1h' }));
    // History fallback: the web app's own router handles every non-API page.
    app.use((req, res, next) => {
      if (req.method !== 'GET' && req.method !== 'HEAD') {
        next();
        return;
      }
      res.setHeader('Cache-Control', 'no-cache');
      res.sendFile(indexHtml);
    });
  }

  app.use(() => {
    throw new AppError(404, 'not_found', 'There is nothing here.');
  });
  app.use(errorMiddleware);
  return app;
}
