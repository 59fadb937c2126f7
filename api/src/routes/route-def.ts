import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { z } from 'zod';
import type { Config } from '../config.ts';
import { USER_ROLES, type UserRole } from '../models/index.ts';
import type { AuthContext } from '../services/auth.ts';
import type { FitRunnerLike } from '../services/datalogs/fit-runner.ts';
import type { PullRunnerLike } from '../services/pull/pull-runner.ts';
import type { SweepQueue } from '../services/sweeps.ts';

/** Everything a handler may hand on to a service. */
export interface ApiDeps {
  knex: Knex;
  config: Config;
  queue: SweepQueue;
  logger: Logger;
  pulls: PullRunnerLike;
  fits: FitRunnerLike;
}

export type HttpMethod = 'get' | 'post' | 'patch' | 'put' | 'delete';

/** Who may call a route: anyone (no token), or signed-in members holding one of the roles. */
export type Access = 'public' | readonly UserRole[];

/**
 * How a route meets workspace data, which is what the authorization matrix checks on the "foreign" side:
 * - `object`: the path names one workspace record; another workspace's answers 404 like a missing one.
 * - `reference`: the body names workspace records; another workspace's are refused like missing ones.
 * - `collection`: lists or creates within the caller's workspace; another workspace's records never show.
 * - `self`: about the caller only (their account, a computation on what they send).
 * - `public`: no account at all.
 */
export type Scope = 'object' | 'reference' | 'collection' | 'self' | 'public';

export type LimiterName =
  | 'signInPerAddress'
  | 'signInPerAccount'
  | 'register'
  | 'changePassword'
  | 'passwordResetPerAddress'
  | 'passwordResetPerAccount'
  | 'sharedView';

/** Role sets of DESIGN.md's table, named once so every route says which rule it follows. */
export const ROLES = {
  everyone: USER_ROLES,
  /** Create, edit and run scenarios, pulls and sweeps (builders only their own: see OWN_ONLY). */
  compute: ['admin', 'engineer', 'builder'],
  /** Edit the shared hardware library. */
  libraryEditors: ['admin', 'engineer'],
  /** Members, roles and invitations. */
  admins: ['admin'],
  /** Create, send and revoke read-only share links (DESIGN.md: analysts share too; builders do not). */
  sharers: ['admin', 'engineer', 'analyst'],
} as const satisfies Record<string, readonly UserRole[]>;

/** A file sent as multipart/form-data, held in memory (the route's `maxBytes` bounds it). */
export interface UploadedFile {
  fieldName: string;
  originalName: string;
  mimeType: string;
  size: number;
  buffer: Buffer;
}

/**
 * How a route reads its request body. JSON is the default; a multipart form carries one file in
 * `field` beside text fields that the route's `body` schema parses; a raw body is kept as bytes for a
 * caller that must see them unchanged (a signed webhook).
 */
export type RequestBodyKind =
  | { kind: 'json' }
  | {
      kind: 'multipart'
      field: string
      /** The most the form parser reads of the file, whatever the configuration. */
      maxBytes: number
      /** A lower limit from the configuration, read when the router is built: the parser stops reading there. */
      configuredMaxBytes?: (config: Config) => number
    }
  | { kind: 'raw'; maxBytes: number };

/** What a route answers with, for the OpenAPI document; JSON unless the route streams. */
export type Produces = 'application/json' | 'text/event-stream' | 'text/csv';

/**
 * An answer written piece by piece: the source is piped to the response with back-pressure, and closed
 * (its `return()` called) when the client goes away, so a generator's `finally` releases what it holds.
 */
export class StreamReply {
  readonly contentType: string;
  readonly source: AsyncIterable<string | Buffer>;
  readonly headers: Readonly<Record<string, string>>;
  readonly status: number;
  /** Offered to the browser as a download under this name. */
  readonly filename: string | undefined;

  constructor(options: {
    contentType: string;
    source: AsyncIterable<string | Buffer>;
    headers?: Record<string, string>;
    status?: number;
    filename?: string;
  }) {
    this.contentType = options.contentType;
    this.source = options.source;
    this.headers = options.headers ?? {};
    this.status = options.status ?? 200;
    this.filename = options.filename;
  }
}

/** A handler answers with its route's success status, or with another one through Reply. */
export class Reply {
  constructor(
    readonly status: number,
    readonly body: unknown,
  ) {}
}

export interface HandlerInput<P, Q, B, A extends Access> {
  deps: ApiDeps;
  auth: A extends 'public' ? undefined : AuthContext;
  params: P;
  query: Q;
  body: B;
  /** The request's headers (lower-case names), for a route that must read one (a webhook's signature). */
  headers: Readonly<Record<string, string | string[] | undefined>>;
  /** Aborted when the client goes away, so long work or a stream can stop early. */
  signal: AbortSignal;
  /** The client's address as Express sees it (rate limits, audit). */
  ip: string;
  /** The uploaded file of a multipart route; undefined when the form had none. */
  file?: UploadedFile;
  /** The exact bytes of a raw-body route. */
  rawBody?: Buffer;
}

type Out<S> = S extends z.ZodType ? z.output<S> : undefined;

export interface RouteSpec<
  P extends z.ZodType | undefined,
  Q extends z.ZodType | undefined,
  B extends z.ZodType | undefined,
  A extends Access,
> {
  /** Stable name: the OpenAPI operationId and the key of the route's test fixture. */
  id: string;
  method: HttpMethod;
  /** Express syntax under /api, e.g. `/scenarios/:id`. */
  path: string;
  summary: string;
  tag: string;
  access: A;
  scope: Scope;
  /**
   * Roles of `access` that act only on a record they own (a scenario they made, a sweep they started, a datalog they
   * uploaded); on another member's record in the same workspace they get 403. The service enforces it where it reads
   * the record; the authorization matrix checks both against each other.
   */
  ownOnly?: readonly UserRole[];
  /** What the path names, for the 404 of an id that is not one ("Scenario was not found."). */
  resource?: string;
  params?: P;
  query?: Q;
  body?: B;
  /** The body may be left out entirely (a POST that only acts on its path). */
  bodyOptional?: boolean;
  /** How the body is read; JSON when left out. */
  requestBody?: RequestBodyKind;
  /** The success answer's media type; JSON when left out. */
  produces?: Produces;
  success: { status: number; description: string; schema?: z.ZodType };
  /** Other answers the route gives besides the ones every route may give (400, 401, 403, 404, 413, 415, 500). */
  errors?: readonly number[];
  limiters?: readonly LimiterName[];
  handler: (input: HandlerInput<Out<P>, Out<Q>, Out<B>, A>) => unknown;
}

export type AnyRoute = RouteSpec<z.ZodType | undefined, z.ZodType | undefined, z.ZodType | undefined, Access>;

/**
 * Keeps the handler's argument types tied to the route's own schemas, then files the route under one
 * common type so the router, the OpenAPI document and the tests can walk the table.
 */
export function defineRoute<
  P extends z.ZodType | undefined = undefined,
  Q extends z.ZodType | undefined = undefined,
  B extends z.ZodType | undefined = undefined,
  const A extends Access = Access,
>(spec: RouteSpec<P, Q, B, A>): AnyRoute {
  return spec as unknown as AnyRoute;
}

/**
 * Builders act on their own compute and their own records (DESIGN.md): they edit, delete, pull, sweep and cancel only
 * what they made, and spend units only on their own scenarios. Admins and engineers act on any in the workspace.
 */
export const OWN_ONLY: readonly UserRole[] = ['builder'];

/** Whether `role` acts only on its own records on this route. */
export function ownOnly(route: Pick<AnyRoute, 'ownOnly'>, role: UserRole): boolean {
  return route.ownOnly?.includes(role) ?? false;
}

export function allows(route: Pick<AnyRoute, 'access'>, role: UserRole): boolean {
  return route.access === 'public' || route.access.includes(role);
}
