import { z } from 'zod';
import { idParamsSchema } from '../schemas/common.ts';
import {
  LIBRARY_KIND_KEYS,
  LIBRARY_KINDS,
  libraryCreateBodySchema,
  libraryListQuerySchema,
  libraryRowSchema,
  libraryUpdateBodySchema,
  type LibraryCreateBody,
  type LibraryKind,
  type LibraryListQuery,
  type LibraryUpdateBody,
} from '../schemas/library.ts';
import {
  createLibraryItem,
  deleteLibraryItem,
  getLibraryItem,
  listLibraryItems,
  updateLibraryItem,
} from '../services/library.ts';
import { defineRoute, ROLES, type AnyRoute } from './route-def.ts';

const capitalised = (text: string) => text.charAt(0).toUpperCase() + text.slice(1);

/** The same five routes for every kind of part, under /library/<kind>. */
function routesFor(kind: LibraryKind): AnyRoute[] {
  const plural = capitalised(kind.key);
  const singular = kind.title;
  const row = libraryRowSchema(kind);
  const one = z.object({ item: row });
  const collection = `/library/${kind.key}`;
  const member = `${collection}/:id`;
  return [
    defineRoute({
      id: `list${plural}`,
      method: 'get',
      path: collection,
      summary: `The workspace's ${kind.key}, filtered, sorted and paged`,
      tag: 'Library',
      access: ROLES.everyone,
      scope: 'collection',
      query: libraryListQuerySchema(kind),
      success: { status: 200, description: `One page of ${kind.key}`, schema: z.object({ items: z.array(row), total: z.number().int() }) },
      handler: ({ deps, auth, query }) => listLibraryItems(deps.knex, kind, auth.workspaceId, query as LibraryListQuery),
    }),
    defineRoute({
      id: `get${singular}`,
      method: 'get',
      path: member,
      summary: `One ${kind.singular}`,
      tag: 'Library',
      access: ROLES.everyone,
      scope: 'object',
      resource: singular,
      params: idParamsSchema,
      success: { status: 200, description: `The ${kind.singular}`, schema: one },
      handler: async ({ deps, auth, params }) => ({ item: await getLibraryItem(deps.knex, kind, auth.workspaceId, params.id) }),
    }),
    defineRoute({
      id: `create${singular}`,
      method: 'post',
      path: collection,
      summary: `Add a ${kind.singular} to the library`,
      tag: 'Library',
      access: ROLES.libraryEditors,
      scope: 'collection',
      body: libraryCreateBodySchema(kind),
      success: { status: 201, description: 'Added', schema: one },
      errors: [409],
      handler: async ({ deps, auth, body }) => ({ item: await createLibraryItem(deps.knex, kind, auth, body as LibraryCreateBody) }),
    }),
    defineRoute({
      id: `update${singular}`,
      method: 'patch',
      path: member,
      summary: `Change, archive or bring back a ${kind.singular}; the version must be the one last read`,
      tag: 'Library',
      access: ROLES.libraryEditors,
      scope: 'object',
      resource: singular,
      params: idParamsSchema,
      body: libraryUpdateBodySchema(kind),
      success: { status: 200, description: 'Changed, with the version one higher', schema: one },
      errors: [409],
      handler: async ({ deps, auth, params, body }) => ({
        item: await updateLibraryItem(deps.knex, kind, auth, params.id, body as LibraryUpdateBody),
      }),
    }),
    defineRoute({
      id: `delete${singular}`,
      method: 'delete',
      path: member,
      summary: `Delete a ${kind.singular}; refused with 409 naming the scenarios built from it`,
      tag: 'Library',
      access: ROLES.libraryEditors,
      scope: 'object',
      resource: singular,
      params: idParamsSchema,
      success: { status: 204, description: 'Deleted' },
      errors: [409],
      handler: async ({ deps, auth, params }) => {
        await deleteLibraryItem(deps.knex, kind, auth, params.id);
      },
    }),
  ];
}

export const libraryRoutes: AnyRoute[] = LIBRARY_KIND_KEYS.flatMap((key) => routesFor(LIBRARY_KINDS[key]));
