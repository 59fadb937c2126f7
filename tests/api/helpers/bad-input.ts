import type { z } from 'zod';

/**
 * Bad requests made from a route's own body schema and one valid body: every field left out (where it
 * is required), given the wrong type, pushed out of its range, an unknown field at every level, and
 * SQL metacharacters in every text. The schema is walked beside the valid value, so a union takes the
 * branch the value is in; optional fields the valid body leaves out get cases from the schema alone.
 */
export type BadKind = 'missing' | 'wrong type' | 'out of range' | 'unknown field' | 'sql text';

export interface BadCase {
  name: string;
  /** Dotted path of the field the answer must name (it, a field inside it, or the object it sits in). */
  path: string;
  kind: BadKind;
  /** The bad body made from a valid one (each case is sent on a fresh valid request). */
  apply(valid: unknown): unknown;
}

export const SQL_TEXT = `Harrow'); DROP TABLE scenarios; -- "x" \\ %_`;

/** How deep into a body cases are made (data.wastegate.valveDiameterM is three deep). */
const MAX_DEPTH = 4;

type Path = (string | number)[];
type Def = { type: string } & Record<string, unknown>;

function def(schema: z.ZodType): Def {
  return (schema as unknown as { _zod: { def: Def } })._zod.def;
}

/** The schema under optional, default, nullable and pipes (their input side). */
function unwrap(schema: z.ZodType): z.ZodType {
  let current = schema;
  for (;;) {
    const d = def(current);
    if (['optional', 'default', 'prefault', 'nullable', 'readonly', 'catch', 'nonoptional'].includes(d.type)) current = d.innerType as z.ZodType;
    else if (d.type === 'pipe') current = d.in as z.ZodType;
    else return current;
  }
}

/** The branch of a union the value is in, or the schema itself. */
function branch(schema: z.ZodType, value: unknown): z.ZodType {
  const inner = unwrap(schema);
  const d = def(inner);
  if (d.type !== 'union') return inner;
  const option = (d.options as z.ZodType[]).find((o) => o.safeParse(value).success);
  return option ? unwrap(option) : inner;
}

function shapeOf(schema: z.ZodType): Record<string, z.ZodType> | undefined {
  const d = def(schema);
  return d.type === 'object' ? (d.shape as Record<string, z.ZodType>) : undefined;
}

function isStrict(schema: z.ZodType): boolean {
  const d = def(schema);
  return d.type === 'object' && d.catchall !== undefined && def(d.catchall as z.ZodType).type === 'never';
}

function childOf(schema: z.ZodType | undefined, key: string | number, parentValue: unknown): z.ZodType | undefined {
  if (!schema) return undefined;
  const inner = branch(schema, parentValue);
  const d = def(inner);
  if (d.type === 'object') return (d.shape as Record<string, z.ZodType>)[String(key)];
  if (d.type === 'array') return d.element as z.ZodType;
  if (d.type === 'record') return d.valueType as z.ZodType;
  return undefined;
}

function isRequired(schema: z.ZodType | undefined): boolean {
  return schema !== undefined && !schema.safeParse(undefined).success;
}

const REMOVE = Symbol('remove');

function setAt(root: unknown, path: Path, value: unknown): unknown {
  const copy = structuredClone(root ?? {}) as Record<string | number, unknown>;
  let node = copy;
  for (const key of path.slice(0, -1)) node = node[key] as Record<string | number, unknown>;
  const last = path[path.length - 1]!;
  if (value === REMOVE) delete node[last];
  else node[last] = value;
  return copy;
}

/** A value of another JSON type than the schema (or the valid value) has; undefined where any value goes. */
function wrongTypeFor(schema: z.ZodType | undefined, value: unknown): unknown {
  if (value !== undefined) {
    if (typeof value === 'string') return 12345;
    if (typeof value === 'number') return 'twelve';
    if (typeof value === 'boolean') return 'yes';
    if (Array.isArray(value)) return 'not a list';
    if (value === null) return 7;
    return 'not an object';
  }
  const type = schema ? def(unwrap(schema)).type : 'unknown';
  if (type === 'string' || type === 'enum' || type === 'literal') return 12345;
  if (type === 'number') return 'twelve';
  if (type === 'boolean') return 'yes';
  if (type === 'array') return 'not a list';
  if (type === 'object' || type === 'union' || type === 'record') return 'not an object';
  return undefined;
}

function isText(schema: z.ZodType | undefined, value: unknown): boolean {
  if (typeof value === 'string') return true;
  if (value !== undefined || !schema) return false;
  const type = def(unwrap(schema)).type;
  return type === 'string' || type === 'enum';
}

interface Bounds {
  min?: number;
  max?: number;
  maxLength?: number;
}

function boundsOf(schema: z.ZodType | undefined): Bounds {
  if (!schema) return {};
  const inner = unwrap(schema);
  const type = def(inner).type;
  if (type === 'number') {
    const { minValue, maxValue } = inner as unknown as { minValue: number | null; maxValue: number | null };
    return {
      ...(minValue !== null && Number.isFinite(minValue) ? { min: minValue } : {}),
      ...(maxValue !== null && Number.isFinite(maxValue) ? { max: maxValue } : {}),
    };
  }
  if (type === 'string' || type === 'array') {
    const checks = (def(inner).checks as { _zod: { def: { check: string; maximum?: number } } }[] | undefined) ?? [];
    const max = checks.map((c) => c._zod.def).find((c) => c.check === 'max_length')?.maximum;
    return max === undefined ? {} : { maxLength: max };
  }
  return {};
}

function leafCases(schema: z.ZodType | undefined, value: unknown, path: Path, required: boolean): BadCase[] {
  const dotted = path.join('.');
  const cases: BadCase[] = [];
  const put = (kind: BadKind, name: string, bad: unknown) =>
    cases.push({ kind, name: `${dotted} ${name}`, path: dotted, apply: (v) => setAt(v, path, bad) });

  const wrong = wrongTypeFor(schema, value);
  if (wrong !== undefined) put('wrong type', 'of the wrong type', wrong);
  if (required && value !== undefined) put('missing', 'left out', REMOVE);
  const bounds = boundsOf(schema);
  if (bounds.min !== undefined) put('out of range', 'below its range', bounds.min - Math.max(1, Math.abs(bounds.min)));
  if (bounds.max !== undefined) put('out of range', 'above its range', bounds.max + Math.max(1, Math.abs(bounds.max)));
  if (bounds.maxLength !== undefined) {
    if (Array.isArray(value) && value.length > 0) {
      put('out of range', 'with too many entries', Array.from({ length: bounds.maxLength + 1 }, (_, i) => value[i % value.length]));
    } else if (!Array.isArray(value) && def(unwrap(schema!)).type === 'string') {
      put('out of range', 'too long', 'x'.repeat(bounds.maxLength + 1));
    }
  }
  if (isText(schema, value)) put('sql text', 'with SQL metacharacters', SQL_TEXT);
  return cases;
}

export function badBodies(schema: z.ZodType, valid: unknown): BadCase[] {
  const cases: BadCase[] = [];
  const walk = (nodeSchema: z.ZodType | undefined, value: unknown, path: Path, required: boolean) => {
    if (path.length > 0) cases.push(...leafCases(nodeSchema, value, path, required));
    if (path.length >= MAX_DEPTH) return;
    if (Array.isArray(value)) {
      value.forEach((item, index) => walk(childOf(nodeSchema, index, value), item, [...path, index], false));
      return;
    }
    if (typeof value !== 'object' || value === null) return;
    for (const [key, item] of Object.entries(value)) {
      const child = childOf(nodeSchema, key, value);
      walk(child, item, [...path, key], isRequired(child));
    }
    const inner = nodeSchema ? branch(nodeSchema, value) : undefined;
    const shape = inner ? shapeOf(inner) : undefined;
    for (const [key, child] of Object.entries(shape ?? {})) {
      if (!(key in (value as object))) cases.push(...leafCases(child, undefined, [...path, key], false));
    }
    if (path.length === 0 || (inner && isStrict(inner))) {
      const unknown = [...path, 'unexpectedField'];
      cases.push({ kind: 'unknown field', name: `${unknown.join('.')} added`, path: unknown.join('.'), apply: (v) => setAt(v, unknown, 1) });
    }
  };
  walk(schema, valid, [], true);
  return cases;
}

/**
 * Whether a body schema has anything a kind of case could be made of (any field for "wrong type", a
 * required one for "missing", …), read from the schema alone: where it has, the cases must not be empty.
 */
export function schemaOffers(schema: z.ZodType, kind: BadKind): boolean {
  if (kind === 'unknown field') return true;
  const seen = new Set<z.ZodType>();
  const visit = (node: z.ZodType, depth: number): boolean => {
    const inner = unwrap(node);
    if (seen.has(inner) || depth > MAX_DEPTH) return false;
    seen.add(inner);
    const d = def(inner);
    if (d.type === 'union') return (d.options as z.ZodType[]).some((option) => visit(option, depth));
    if (d.type === 'array') return visit(d.element as z.ZodType, depth + 1);
    const shape = shapeOf(inner);
    if (!shape) return false;
    return Object.values(shape).some((child) => {
      if (kind === 'wrong type' && wrongTypeFor(child, undefined) !== undefined) return true;
      if (kind === 'missing' && isRequired(child)) return true;
      if (kind === 'out of range' && Object.keys(boundsOf(child)).length > 0) return true;
      if (kind === 'sql text' && isText(child, undefined)) return true;
      return visit(child, depth + 1);
    });
  };
  return visit(schema, 0);
}

/**
 * The answer names the field: the field itself, one inside it, or the object it sits in (a union names
 * its object when the branch cannot be told), never a further ancestor or just "body".
 */
export function namesField(fields: Record<string, string> | undefined, path: string): boolean {
  if (!fields) return false;
  const parts = path.split('.');
  const container = parts.slice(0, -1);
  while (container.length > 0 && /^\d+$/.test(container[container.length - 1]!)) container.pop();
  const parents = new Set([parts.slice(0, -1).join('.'), container.join('.')].filter((p) => p !== ''));
  return Object.keys(fields).some((field) => field === path || field.startsWith(`${path}.`) || parents.has(field));
}
