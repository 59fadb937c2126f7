import { Router } from 'express';
import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import { authenticate, authOf, requireRole } from '../middleware/authenticate.ts';
import { paginationQuerySchema, parseId, parseInput } from '../schemas/common.ts';
import { createScenarioBodySchema, updateScenarioBodySchema } from '../schemas/scenarios.ts';
import { createScenario, getScenario, listScenarios, updateScenario } from '../services/scenarios.ts';

export function scenarioRoutes(deps: { knex: Knex; config: Config }): Router {
  const { knex } = deps;
  const router = Router();
  router.use('/scenarios', authenticate(deps));

  router.get('/scenarios', async (req, res) => {
    res.json(await listScenarios(knex, authOf(req).workspaceId, parseInput(paginationQuerySchema, req.query)));
  });

  router.get('/scenarios/:id', async (req, res) => {
    res.json({ scenario: await getScenario(knex, authOf(req).workspaceId, parseId(req.params.id, 'Scenario')) });
  });

  router.post('/scenarios', requireRole('admin', 'engineer', 'builder'), async (req, res) => {
    res.status(201).json({ scenario: await createScenario(knex, authOf(req), parseInput(createScenarioBodySchema, req.body)) });
  });

  router.patch('/scenarios/:id', requireRole('admin', 'engineer', 'builder'), async (req, res) => {
    const id = parseId(req.params.id, 'Scenario');
    res.json({ scenario: await updateScenario(knex, authOf(req), id, parseInput(updateScenarioBodySchema, req.body)) });
  });

  return router;
}
