import { idParamsSchema } from '../schemas/common.ts';
import { emptyBodySchema } from '../schemas/pulls.ts';
import {
  exportPointsQuerySchema,
  listPointsQuerySchema,
  pointParamsSchema,
  sweepPointListSchema,
  sweepPointPullResponseSchema,
} from '../schemas/sweep-results.ts';
import { streamSweepEvents } from '../services/sweep-events.ts';
import { exportSweepPoints } from '../services/sweep-export.ts';
import { pullSweepPoint } from '../services/sweep-point-pull.ts';
import { listSweepPoints } from '../services/sweep-points.ts';
import { defineRoute, OWN_ONLY, ROLES } from './route-def.ts';

/** What a finished or running sweep gives: its progress live, its points as a table and a file, one point's pull. */
export const sweepResultRoutes = [
  defineRoute({
    id: 'getSweepEvents',
    method: 'get',
    path: '/sweeps/:id/events',
    summary:
      'The sweep\'s progress as server-sent events: "state" on each change of state, "progress" at once and then at most once a second while it changes, until a final state',
    tag: 'Sweeps',
    access: ROLES.everyone,
    scope: 'object',
    resource: 'Sweep',
    params: idParamsSchema,
    produces: 'text/event-stream',
    success: {
      status: 200,
      description:
        'An event stream. `state` data: { state, previous }. `progress` data: { state, pointCount, pointsDone, pointsFailed, pointsPerSecond, secondsLeft } ' +
        '(the rate over the last ten seconds; secondsLeft null until it can be estimated). Every event has an id; comment lines keep the stream open. ' +
        'The stream ends after a done, failed or cancelled state.',
    },
    errors: [429],
    handler: ({ deps, auth, params, signal }) => streamSweepEvents(deps, auth, params.id, signal),
  }),
  defineRoute({
    id: 'listSweepPoints',
    method: 'get',
    path: '/sweeps/:id/points',
    summary: "One page of the sweep's points, sorted by index, an axis or a stored metric, optionally of some statuses",
    tag: 'Sweeps',
    access: ROLES.everyone,
    scope: 'object',
    resource: 'Sweep',
    params: idParamsSchema,
    query: listPointsQuerySchema,
    success: { status: 200, description: 'The page; coordinates by axis path and metrics in SI (pressures gauge, Pa)', schema: sweepPointListSchema },
    handler: ({ deps, auth, params, query }) => listSweepPoints(deps.knex, auth.workspaceId, params.id, query),
  }),
  defineRoute({
    id: 'exportSweepPoints',
    method: 'get',
    path: '/sweeps/:id/points.csv',
    summary: "Every point of the sweep as CSV (RFC 4180), streamed, in SI, US or metric units",
    tag: 'Sweeps',
    access: ROLES.everyone,
    scope: 'object',
    resource: 'Sweep',
    params: idParamsSchema,
    query: exportPointsQuerySchema,
    produces: 'text/csv',
    success: {
      status: 200,
      description: 'A CSV download named after the scenario and the sweep: a header row with each column\'s unit, then one row per point in index order',
    },
    handler: ({ deps, auth, params, query }) => exportSweepPoints(deps.knex, auth.workspaceId, params.id, query),
  }),
  defineRoute({
    id: 'pullSweepPoint',
    method: 'post',
    path: '/sweeps/:id/points/:index/pull',
    summary: "One point's full pull, recomputed from the sweep's snapshot of its scenario (one compute unit)",
    tag: 'Sweeps',
    access: ROLES.compute,
    scope: 'object',
    ownOnly: OWN_ONLY,
    resource: 'Sweep',
    params: pointParamsSchema,
    body: emptyBodySchema,
    bodyOptional: true,
    success: {
      status: 200,
      description: 'The pull, as a pull of a stored scenario gives it, with the sweep, the point and its coordinates',
      schema: sweepPointPullResponseSchema,
    },
    errors: [402, 422, 503],
    handler: ({ deps, auth, params }) => pullSweepPoint(deps, auth, params.id, params.index),
  }),
];
