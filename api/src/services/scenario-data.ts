import { parseScenario, type Scenario as ScenarioData } from '@crackpoint/sim-core';
import { AppError, type FieldErrors } from '../errors/index.ts';

/** Validates a full scenario with sim-core and names each problem under `prefix` (e.g. `data.`). */
export function validateScenarioData(input: unknown, prefix: string): ScenarioData {
  const parsed = parseScenario(input);
  if (parsed.ok) return parsed.scenario;
  const fields: FieldErrors = {};
  for (const issue of parsed.issues) {
    const path = [prefix, issue.path].filter((part) => part !== '').join('.');
    fields[path] ??= issue.message;
  }
  throw AppError.validation(fields, 'The scenario is not valid.');
}
