import { parseScenario, type Scenario as ScenarioData } from '@crackpoint/sim-core';
import { AppError, type FieldErrors } from '../errors/index.ts';

function fieldsOf(issues: { path: string; message: string }[], prefix: string): FieldErrors {
  const fields: FieldErrors = {};
  for (const issue of issues) {
    const path = [prefix, issue.path].filter((part) => part !== '').join('.');
    fields[path] ??= issue.message;
  }
  return fields;
}

/** Validates a full scenario with sim-core and names each problem under `prefix` (e.g. `data.`). */
export function validateScenarioData(input: unknown, prefix: string): ScenarioData {
  const parsed = parseScenario(input);
  if (parsed.ok) return parsed.scenario;
  throw AppError.validation(fieldsOf(parsed.issues, prefix), 'The scenario is not valid.');
}

/**
 * A stored scenario read again through sim-core, so inputs the model gained since it was saved get
 * their defaults. One the model no longer accepts is a 422 naming what to fix, never a 500.
 */
export function storedScenarioData(stored: unknown): ScenarioData {
  const parsed = parseScenario(stored);
  if (parsed.ok) return parsed.scenario;
  throw new AppError(422, 'scenario_outdated', 'This scenario needs changes before it can be computed again.', fieldsOf(parsed.issues, 'data'));
}
