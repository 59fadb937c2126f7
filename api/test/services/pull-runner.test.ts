import { defaultScenario } from '@crackpoint/sim-core';
import { afterEach, describe, expect, it } from 'vitest';
import { PullFailedError, PullRunner, PullTimeoutError } from '../../src/services/pull/pull-runner.ts';

const runners: PullRunner[] = [];
function runner(threads: number, timeLimitMs: number): PullRunner {
  const made = new PullRunner({ threads, timeLimitMs });
  runners.push(made);
  return made;
}

afterEach(async () => {
  await Promise.all(runners.splice(0).map((r) => r.close()));
});

/** Asks for far more work than the default: a tight tolerance and tiny steps over a long pull. */
function slowScenario() {
  const s = defaultScenario();
  s.engine.pullDurationS = 30;
  s.solver.relativeTolerance = 1e-10;
  s.solver.maxStepS = 1e-5;
  s.solver.maxSteps = 10_000_000;
  return s;
}

describe('PullRunner', () => {
  it('computes pulls in a thread, one after another when there is one thread', async () => {
    const pulls = runner(1, 30_000);
    const [a, b] = await Promise.all([pulls.run(defaultScenario()), pulls.run(defaultScenario())]);
    expect(a.stats.outcome).toBe('converged');
    expect(b.series.timeS).toEqual(a.series.timeS);
  }, 60_000);

  it('stops a pull past its time limit and replaces the thread for the next one', async () => {
    const pulls = runner(1, 1500);
    await expect(pulls.run(slowScenario())).rejects.toBeInstanceOf(PullTimeoutError);
    const next = await runner(1, 30_000).run(defaultScenario());
    expect(next.stats.outcome).toBe('converged');
  }, 60_000);

  it('counts the wait for a busy thread against the time limit', async () => {
    const pulls = runner(1, 1500);
    await Promise.all([
      expect(pulls.run(slowScenario())).rejects.toBeInstanceOf(PullTimeoutError),
      expect(pulls.run(defaultScenario())).rejects.toBeInstanceOf(PullTimeoutError),
    ]);
  }, 60_000);

  it('refuses work once closed', async () => {
    const pulls = runner(1, 30_000);
    await pulls.close();
    await expect(pulls.run(defaultScenario())).rejects.toBeInstanceOf(PullFailedError);
  });
});
