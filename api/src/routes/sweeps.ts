import { Router } from 'express';
import { authenticate, authOf, requireRole } from '../middleware/authenticate.ts';
import { parseId, parseInput } from '../schemas/common.ts';
import { createSweepBodySchema, listSweepsQuerySchema, surfaceQuerySchema } from '../schemas/sweeps.ts';
import { createSweep, getSurface, getSweep, listSweeps, type SweepDeps } from '../services/sweeps.ts';

export function sweepRoutes(deps: SweepDeps): Router {
  const router = Router();
  router.use('/sweeps', authenticate(deps));

  router.post('/sweeps', requireRole('admin', 'engineer', 'builder'), async (req, res) => {
    res.status(201).json({ sweep: await createSweep(deps, authOf(req), parseInput(createSweepBodySchema, req.body)) });
  });

  router.get('/sweeps', async (req, res) => {
    res.json(await listSweeps(deps.knex, authOf(req).workspaceId, parseInput(listSweepsQuerySchema, req.query)));
  });

  router.get('/sweeps/:id', async (req, res) => {
    res.json({ sweep: await getSweep(deps.knex, authOf(req).workspaceId, parseId(req.params.id, 'Sweep')) });
  });

  router.get('/sweeps/:id/surface', async (req, res) => {
    const id = parseId(req.params.id, 'Sweep');
    res.json(await getSurface(deps.knex, authOf(req).workspaceId, id, parseInput(surfaceQuerySchema, req.query)));
  });

  return router;
}
