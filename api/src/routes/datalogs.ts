import { idParamsSchema } from '../schemas/common.ts';
import {
  datalogDetailSchema,
  datalogFitBodySchema,
  datalogFitResponseSchema,
  datalogListSchema,
  datalogMappingSchema,
  datalogOverlaySchema,
  datalogResponseSchema,
  datalogScenarioBodySchema,
  listDatalogsQuerySchema,
} from '../schemas/datalogs.ts';
import {
  deleteDatalog,
  fitDatalog,
  getDatalog,
  listDatalogs,
  overlayDatalog,
  updateDatalogMapping,
  uploadDatalog,
} from '../services/datalogs/datalogs.ts';
import { defineRoute, Reply, OWN_ONLY, ROLES } from './route-def.ts';

/** The form field that carries the log. */
export const DATALOG_FILE_FIELD = 'file';

/**
 * The most any configuration lets a log be (DATALOG_MAX_BYTES at most 20 MiB). The form parser stops reading at the
 * configured limit, at or below it.
 */
export const DATALOG_UPLOAD_CEILING_BYTES = 20 * 1024 * 1024;

export const datalogRoutes = [
  defineRoute({
    id: 'uploadDatalog',
    method: 'post',
    path: '/datalogs',
    summary: 'Upload a CSV datalog of one pull (multipart field "file"): its columns and units are detected and its series stored',
    tag: 'Datalogs',
    access: ROLES.compute,
    scope: 'collection',
    requestBody: {
      kind: 'multipart',
      field: DATALOG_FILE_FIELD,
      maxBytes: DATALOG_UPLOAD_CEILING_BYTES,
      configuredMaxBytes: (config) => config.datalogMaxBytes,
    },
    success: { status: 201, description: 'Stored, with the detected mapping to confirm', schema: datalogResponseSchema },
    errors: [413, 415, 422],
    handler: async ({ deps, auth, file }) => ({ datalog: await uploadDatalog(deps.knex, deps.config, auth, file) }),
  }),
  defineRoute({
    id: 'listDatalogs',
    method: 'get',
    path: '/datalogs',
    summary: "The workspace's datalogs, newest first",
    tag: 'Datalogs',
    access: ROLES.everyone,
    scope: 'collection',
    query: listDatalogsQuerySchema,
    success: { status: 200, description: 'One page of datalogs', schema: datalogListSchema },
    handler: ({ deps, auth, query }) => listDatalogs(deps.knex, auth.workspaceId, query),
  }),
  defineRoute({
    id: 'getDatalog',
    method: 'get',
    path: '/datalogs/:id',
    summary: 'One datalog with its series (SI: s, Pa gauge, duty 0–1)',
    tag: 'Datalogs',
    access: ROLES.everyone,
    scope: 'object',
    resource: 'Datalog',
    params: idParamsSchema,
    success: { status: 200, description: 'The datalog and its series', schema: datalogDetailSchema },
    handler: ({ deps, auth, params }) => getDatalog(deps.knex, auth.workspaceId, params.id),
  }),
  defineRoute({
    id: 'updateDatalogMapping',
    method: 'put',
    path: '/datalogs/:id/mapping',
    summary: 'Confirm or change which column holds each quantity and its unit; the series is parsed again',
    tag: 'Datalogs',
    access: ROLES.compute,
    scope: 'object',
    resource: 'Datalog',
    params: idParamsSchema,
    body: datalogMappingSchema,
    success: { status: 200, description: 'The datalog with the mapping confirmed, and its new series', schema: datalogDetailSchema },
    errors: [422],
    handler: ({ deps, auth, params, body }) => updateDatalogMapping(deps.knex, auth, params.id, body),
  }),
  defineRoute({
    id: 'deleteDatalog',
    method: 'delete',
    path: '/datalogs/:id',
    summary: 'Delete a datalog and its series (builders: only their own)',
    tag: 'Datalogs',
    access: ROLES.compute,
    scope: 'object',
    ownOnly: OWN_ONLY,
    resource: 'Datalog',
    params: idParamsSchema,
    success: { status: 204, description: 'Deleted' },
    handler: async ({ deps, auth, params }) => {
      await deleteDatalog(deps.knex, auth, params.id);
    },
  }),
  defineRoute({
    id: 'overlayDatalog',
    method: 'post',
    path: '/datalogs/:id/overlay',
    summary: 'The measured series beside one simulated pull of a scenario (a server pull)',
    tag: 'Datalogs',
    access: ROLES.compute,
    scope: 'object',
    ownOnly: OWN_ONLY,
    resource: 'Datalog',
    params: idParamsSchema,
    body: datalogScenarioBodySchema,
    success: { status: 200, description: 'Measured and simulated series and their boost difference', schema: datalogOverlaySchema },
    errors: [402, 409, 422, 503],
    handler: ({ deps, auth, params, body }) => overlayDatalog(deps, auth, params.id, body.scenarioId),
  }),
  defineRoute({
    id: 'fitDatalog',
    method: 'post',
    path: '/datalogs/:id/fit',
    summary: 'Fit the drive-to-boost ratio and spring seat force that best explain the log, written into a new copy of the scenario (a poor fit: 200 and no copy)',
    tag: 'Datalogs',
    access: ROLES.compute,
    scope: 'object',
    ownOnly: OWN_ONLY,
    resource: 'Datalog',
    params: idParamsSchema,
    body: datalogFitBodySchema,
    success: { status: 201, description: 'The fit report and the fitted copy of the scenario', schema: datalogFitResponseSchema },
    errors: [402, 409, 422, 503],
    handler: async ({ deps, auth, params, body }) => {
      const result = await fitDatalog(deps, auth, params.id, body);
      // A poor fit writes no scenario: nothing was created, so the answer is a plain 200.
      return result.scenario === null ? new Reply(200, result) : result;
    },
  }),
];
