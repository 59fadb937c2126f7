import { computeBalance, type BalanceResult } from '@crackpoint/sim-core';
import { validateScenarioData } from './scenario-data.ts';

export function balanceOf(scenarioInput: unknown): { balance: BalanceResult } {
  return { balance: computeBalance(validateScenarioData(scenarioInput, 'scenario')) };
}
