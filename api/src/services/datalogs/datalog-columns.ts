import { parse } from 'csv-parse/sync';
import { toSI, units } from '@crackpoint/sim-core';

/** The quantities a datalog may carry; time and boost are needed for anything to be compared. */
export const DATALOG_QUANTITIES = ['time', 'rpm', 'boost', 'drive', 'duty', 'supply'] as const;
export type DatalogQuantity = (typeof DATALOG_QUANTITIES)[number];
export const REQUIRED_QUANTITIES: readonly DatalogQuantity[] = ['time', 'boost'];

/** Gauge units, and absolute ones (a MAP sensor reads absolute) taken against the standard atmosphere. */
export const PRESSURE_UNITS = ['psi', 'kPa', 'bar', 'psi-abs', 'kPa-abs', 'bar-abs'] as const;
export const DATALOG_UNITS = {
  time: ['s', 'ms'],
  rpm: ['rpm'],
  boost: PRESSURE_UNITS,
  drive: PRESSURE_UNITS,
  duty: ['%', 'fraction'],
  supply: PRESSURE_UNITS,
} as const satisfies Record<DatalogQuantity, readonly string[]>;
export type DatalogUnit = (typeof DATALOG_UNITS)[DatalogQuantity][number];

export interface ColumnChoice {
  column: string;
  unit: string;
}
export type DatalogMapping = { [Q in DatalogQuantity]: ColumnChoice | null } & { time: ColumnChoice; boost: ColumnChoice };

/** The standard atmosphere, taken as ambient for absolute readings (ISO 2533; a log rarely records its own). */
export const STANDARD_ATMOSPHERE_PA = 101_325;
/** A datalog is a table of numbers; past this many rows it is not one pull. */
export const DATALOG_MAX_ROWS = 100_000;
const MIN_ROWS = 5;

/** A problem with the file or with one mapped column, in words a member can act on. */
export class DatalogProblem extends Error {
  constructor(
    readonly code: 'not_a_datalog' | 'datalog_missing_columns' | 'datalog_not_numeric' | 'datalog_time_not_increasing' | 'datalog_unknown_column',
    message: string,
    /** The quantity whose column is at fault; none for a problem of the whole file. */
    readonly quantity?: DatalogQuantity,
    readonly part: 'column' | 'unit' = 'column',
  ) {
    super(message);
    this.name = 'DatalogProblem';
  }
}

export interface DatalogTable {
  headers: string[];
  rows: string[][];
  delimiter: string;
}

/** The delimiter of the header line that splits it into the most fields (outside quotes). */
function guessDelimiter(text: string): string {
  const firstLine = text.slice(0, text.search(/\r?\n|$/));
  let best = ',';
  let bestCount = 0;
  for (const delimiter of [',', ';', '\t']) {
    let count = 0;
    let quoted = false;
    for (const ch of firstLine) {
      if (ch === '"') quoted = !quoted;
      else if (!quoted && ch === delimiter) count++;
    }
    if (count > bestCount) {
      best = delimiter;
      bestCount = count;
    }
  }
  return best;
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** A cell as a number, or undefined; a decimal comma is read where the delimiter is not a comma. */
export function cellNumber(cell: string, delimiter: string): number | undefined {
  const text = delimiter === ',' ? cell.trim() : cell.trim().replace(',', '.');
  if (!NUMBER.test(text)) return undefined;
  const value = Number(text);
  return Number.isFinite(value) ? value : undefined;
}

/**
 * The file as a table of text cells with csv-parse: UTF-8 text, a header row naming every column once,
 * at least five rows, every row as wide as the header. Anything else is a DatalogProblem naming what is wrong.
 */
export function readDatalogTable(buffer: Buffer): DatalogTable {
  if (buffer.includes(0)) throw new DatalogProblem('not_a_datalog', 'is not a text file (it holds binary data); export the log as CSV');
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(buffer);
  } catch {
    throw new DatalogProblem('not_a_datalog', 'is not UTF-8 text; export the log as CSV in UTF-8');
  }
  if (text.trim() === '') throw new DatalogProblem('not_a_datalog', 'is empty');
  const delimiter = guessDelimiter(text.replace(/^\uFEFF/, ''));
  let records: string[][];
  try {
    records = parse(text, { delimiter, bom: true, skip_empty_lines: true, trim: true, relax_quotes: false }) as string[][];
  } catch (error) {
    const detail = error instanceof Error ? error.message.replace(/^Invalid Record Length: /, '') : 'it could not be read';
    throw new DatalogProblem('not_a_datalog', `is not a CSV table: ${detail}`);
  }
  const [headers, ...rows] = records;
  if (!headers || headers.length < 2) {
    throw new DatalogProblem('not_a_datalog', 'is not a CSV table of a log: it needs a header row and at least two columns (time and boost)');
  }
  if (headers.every((h) => cellNumber(h, delimiter) !== undefined)) {
    throw new DatalogProblem('not_a_datalog', 'has no header row: its first row must name the columns (e.g. "Time (s)", "Boost (psi)")');
  }
  const seen = new Set<string>();
  for (const [index, header] of headers.entries()) {
    if (header === '') throw new DatalogProblem('not_a_datalog', `has a column without a name in its header (column ${index + 1})`);
    if (seen.has(header)) throw new DatalogProblem('not_a_datalog', `names the column "${header}" twice in its header`);
    seen.add(header);
  }
  if (rows.length < MIN_ROWS) throw new DatalogProblem('not_a_datalog', `has ${rows.length} rows of data; a log of a pull needs at least ${MIN_ROWS}`);
  if (rows.length > DATALOG_MAX_ROWS) {
    throw new DatalogProblem('not_a_datalog', `has ${rows.length} rows; one pull's log has at most ${DATALOG_MAX_ROWS.toLocaleString('en-GB')}`);
  }
  return { headers, rows, delimiter };
}

/** Header words that name each quantity; a target or setpoint column is never the measured one. */
const NAME_PATTERNS: Record<DatalogQuantity, RegExp> = {
  time: /\b(time|timestamp|elapsed|seconds|secs?|t)\b/,
  rpm: /\b(rpm|engine ?speed|eng ?speed|revs?|n ?eng)\b/,
  boost: /\b(boost|map|manifold( abs(olute)?)? pres(sure|s)?|intake pres(sure|s)?|imap)\b/,
  drive: /\b(drive|emap|exhaust( manifold)? pres(sure|s)?|back ?pressure|turbine inlet|pre ?turbine|exh pres(s|sure)?)\b/,
  duty: /\b(duty|wgdc|pwm|solenoid)\b/,
  supply: /\b(supply|co2|bottle|tank|regulator|reg pres(s|sure)?)\b/,
};
const NOT_MEASURED = /\b(target|desired|setpoint|set point|request(ed)?|limit|error)\b/;

function words(header: string): string {
  return header
    .toLowerCase()
    .replace(/[_\-[\]()/{}.:]+/g, ' ')
    .replace(/\s+/g, ' ')
    .trim();
}

function columnValues(table: DatalogTable, index: number): (number | undefined)[] {
  return table.rows.map((row) => cellNumber(row[index] ?? '', table.delimiter));
}

/** A pressure unit named in the header, or guessed from the values (gauge readings start near zero, MAP near 100 kPa). */
function pressureUnit(header: string, values: number[], mapLike: boolean): { unit: string; fromHeader: boolean } {
  const w = ` ${words(header)} `;
  const first = values[0] ?? 0;
  // A manifold pressure in kPa that starts near one atmosphere is an absolute reading, whatever the header says.
  const absolute = /\b(abs|absolute|psia|kpaa)\b/.test(w) || mapLike || (/\bkpa\b/.test(w) && first > 80 && first < 110);
  if (/\bpsia\b/.test(w)) return { unit: 'psi-abs', fromHeader: true };
  if (/\bpsig?\b/.test(w)) return { unit: absolute && !/\bpsig\b/.test(w) ? 'psi-abs' : 'psi', fromHeader: true };
  if (/\bkpaa?\b/.test(w)) return { unit: absolute ? 'kPa-abs' : 'kPa', fromHeader: true };
  if (/\bbar\b/.test(w)) return { unit: absolute ? 'bar-abs' : 'bar', fromHeader: true };
  const max = Math.max(...values);
  if (first > 80 && first < 110) return { unit: 'kPa-abs', fromHeader: false };
  if (max <= 4) return { unit: 'bar', fromHeader: false };
  if (max <= 60) return { unit: 'psi', fromHeader: false };
  return { unit: 'kPa', fromHeader: false };
}

function unitFor(quantity: DatalogQuantity, header: string, values: number[]): { unit: string; fromHeader: boolean } {
  const w = ` ${words(header)} `;
  switch (quantity) {
    case 'time': {
      if (/\bms\b|\bmillisec/.test(w)) return { unit: 'ms', fromHeader: true };
      if (/\b(s|sec|secs|seconds)\b/.test(w.replace(/\btime\b/, ''))) return { unit: 's', fromHeader: true };
      // A pull lasts seconds: steps of several units over a span of hundreds read as milliseconds.
      const span = (values[values.length - 1] ?? 0) - (values[0] ?? 0);
      const step = values.length > 1 ? span / (values.length - 1) : 0;
      return { unit: span > 100 && step >= 1 ? 'ms' : 's', fromHeader: false };
    }
    case 'rpm':
      return { unit: 'rpm', fromHeader: true };
    case 'duty':
      if (/%|\bpercent|\bpct\b/.test(header.toLowerCase())) return { unit: '%', fromHeader: true };
      return { unit: Math.max(...values) > 1.5 ? '%' : 'fraction', fromHeader: false };
    default:
      return pressureUnit(header, values, quantity === 'boost' && /\bmap\b/.test(w));
  }
}

export interface DetectedMapping {
  mapping: DatalogMapping;
  /** For each quantity, how it was found or why it was not. */
  notes: Partial<Record<DatalogQuantity, string>>;
}

/**
 * Columns and units from the header names (the first header that names a quantity, never a target or a
 * setpoint), units from the header or else guessed from the values. An optional column with text in it is
 * left unmapped and says so; time or boost missing or holding text is a DatalogProblem naming it.
 */
export function detectMapping(table: DatalogTable): DetectedMapping {
  const notes: Partial<Record<DatalogQuantity, string>> = {};
  const taken = new Set<number>();
  const found: Partial<Record<DatalogQuantity, ColumnChoice>> = {};
  for (const quantity of DATALOG_QUANTITIES) {
    const index = table.headers.findIndex((header, i) => {
      const w = words(header);
      return !taken.has(i) && NAME_PATTERNS[quantity].test(w) && !NOT_MEASURED.test(w);
    });
    if (index < 0) {
      notes[quantity] = 'no column named like it';
      continue;
    }
    const header = table.headers[index]!;
    const values = columnValues(table, index);
    const bad = values.findIndex((v) => v === undefined);
    if (bad >= 0) {
      const cell = table.rows[bad]?.[index] ?? '';
      const problem = `column "${header}" has ${cell === '' ? 'an empty cell' : `text ("${cell.slice(0, 40)}")`} in row ${bad + 2}`;
      if (REQUIRED_QUANTITIES.includes(quantity)) throw new DatalogProblem('datalog_not_numeric', `${problem}; ${quantity} must be a number in every row`, quantity);
      notes[quantity] = `${problem}, so it is not mapped`;
      continue;
    }
    taken.add(index);
    const unit = unitFor(quantity, header, values as number[]);
    found[quantity] = { column: header, unit: unit.unit };
    notes[quantity] = unit.fromHeader ? 'unit from the header' : 'unit guessed from the values: check it';
  }
  const missing = REQUIRED_QUANTITIES.filter((q) => !found[q]);
  if (missing.length > 0) {
    throw new DatalogProblem(
      'datalog_missing_columns',
      `has no column for ${missing.join(' or ')} (looked for headers such as "Time (s)" and "Boost (psi)" or "MAP (kPa)"); its columns are ${table.headers.map((h) => `"${h}"`).join(', ')}`,
      missing[0],
    );
  }
  const mapping = {
    time: found.time!,
    boost: found.boost!,
    rpm: found.rpm ?? null,
    drive: found.drive ?? null,
    duty: found.duty ?? null,
    supply: found.supply ?? null,
  };
  return { mapping, notes };
}

/** A datalog's series in SI: time from the first row (s), pressures gauge (Pa), duty 0–1. */
export interface DatalogSeries {
  timeS: number[];
  boostPa: number[];
  rpm: number[] | null;
  drivePa: number[] | null;
  duty: number[] | null;
  supplyPa: number[] | null;
}

function toPascalGauge(unit: string, value: number): number {
  switch (unit) {
    case 'psi':
      return toSI(units.psi, value);
    case 'kPa':
      return toSI(units.kPa, value);
    case 'bar':
      return toSI(units.bar, value);
    case 'psi-abs':
      return toSI(units.psi, value) - STANDARD_ATMOSPHERE_PA;
    case 'kPa-abs':
      return toSI(units.kPa, value) - STANDARD_ATMOSPHERE_PA;
    case 'bar-abs':
      return toSI(units.bar, value) - STANDARD_ATMOSPHERE_PA;
    default:
      throw new DatalogProblem('datalog_unknown_column', `"${unit}" is not a pressure unit`);
  }
}

/** The mapped columns read as numbers and converted to SI; a unit a quantity does not take is refused. */
export function parseSeries(table: DatalogTable, mapping: DatalogMapping): DatalogSeries {
  const read = (quantity: DatalogQuantity): number[] | null => {
    const choice = mapping[quantity];
    if (!choice) return null;
    const allowed = DATALOG_UNITS[quantity] as readonly string[];
    if (!allowed.includes(choice.unit)) {
      throw new DatalogProblem('datalog_unknown_column', `must be one of ${allowed.join(', ')} for ${quantity}`, quantity, 'unit');
    }
    const index = table.headers.indexOf(choice.column);
    if (index < 0) {
      throw new DatalogProblem(
        'datalog_unknown_column',
        `is not a column of this log; its columns are ${table.headers.map((h) => `"${h}"`).join(', ')}`,
        quantity,
      );
    }
    const values = columnValues(table, index);
    const bad = values.findIndex((v) => v === undefined);
    if (bad >= 0) {
      const cell = table.rows[bad]?.[index] ?? '';
      throw new DatalogProblem(
        'datalog_not_numeric',
        `column "${choice.column}" has ${cell === '' ? 'an empty cell' : `text ("${cell.slice(0, 40)}")`} in row ${bad + 2}; ${quantity} must be a number in every row`,
        quantity,
      );
    }
    const numbers = values as number[];
    if (quantity === 'time') return numbers.map((v) => (choice.unit === 'ms' ? v / 1000 : v));
    if (quantity === 'rpm') return numbers;
    if (quantity === 'duty') return numbers.map((v) => (choice.unit === '%' ? v / 100 : v));
    return numbers.map((v) => toPascalGauge(choice.unit, v));
  };
  const time = read('time')!;
  for (let i = 1; i < time.length; i++) {
    if (!(time[i]! > time[i - 1]!)) {
      throw new DatalogProblem(
        'datalog_time_not_increasing',
        `column "${mapping.time.column}" must increase from row to row, but row ${i + 2} is not later than row ${i + 1}`,
        'time',
      );
    }
  }
  const start = time[0]!;
  return {
    // Compared with a pull from its start: the log's own clock is moved to start at zero.
    timeS: time.map((t) => t - start),
    boostPa: read('boost')!,
    rpm: read('rpm'),
    drivePa: read('drive'),
    duty: read('duty'),
    supplyPa: read('supply'),
  };
}
