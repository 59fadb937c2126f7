import { computeBalance, type BalanceResult } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import { storedScenarioData, validateScenarioData } from './scenario-data.ts';
import { findScenario } from './scenarios.ts';

export function balanceOf(scenarioInput: unknown): { balance: BalanceResult } {
  return { balance: computeBalance(validateScenarioData(scenarioInput, 'scenario')) };
}

export async function balanceOfScenario(knex: Knex, workspaceId: string, id: string): Promise<{ balance: BalanceResult }> {
  const scenario = await findScenario(knex, workspaceId, id);
  return { balance: computeBalance(storedScenarioData(scenario.data)) };
}
