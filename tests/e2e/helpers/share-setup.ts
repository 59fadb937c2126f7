import { DEMO_PASSWORD } from '@crackpoint/api'
import type { Harness } from './browser-harness.ts'

/** A bearer token of a demo member, for setting things up through the API. */
export async function apiToken(h: Harness, email: string): Promise<string> {
  const response = await fetch(`${h.baseUrl}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ email, password: DEMO_PASSWORD }),
  })
  if (!response.ok) throw new Error(`sign-in as ${email} answered ${response.status}`)
  return ((await response.json()) as { token: string }).token
}

/** A static sweep of seat force × ratio over a scenario, run by the harness's worker to the end. */
export async function finishedSweep(h: Harness, token: string, scenarioId: string): Promise<string> {
  const created = await fetch(`${h.baseUrl}/api/sweeps`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json', Authorization: `Bearer ${token}` },
    body: JSON.stringify({
      scenarioId,
      level: 'static',
      axes: [
        { path: 'springs.0.seatForceN', range: { from: 120, to: 200, count: 5 } },
        { path: 'exhaust.ratio', range: { from: 1, to: 2, count: 6 } },
      ],
    }),
  })
  if (created.status !== 201) throw new Error(`creating the sweep answered ${created.status}: ${await created.text()}`)
  const { sweep } = (await created.json()) as { sweep: { id: string } }
  const deadline = Date.now() + 60_000
  for (;;) {
    const row = await h.knex('sweeps').where({ id: sweep.id }).first<{ state: string }>('state')
    if (row?.state === 'done') return sweep.id
    if (row?.state === 'failed' || row?.state === 'cancelled') throw new Error(`the sweep ended ${row.state}`)
    if (Date.now() > deadline) throw new Error('the sweep did not finish within 60 s')
    await new Promise((resolve) => setTimeout(resolve, 200))
  }
}

/** A share link made through the API as a member would; its address with the harness's own origin. */
export async function shareLink(h: Harness, token: string, target: 'scenario' | 'sweep', targetId: string): Promise<{ id: string; token: string; path: string }> {
  const response = await fetch(`${h.baseUrl}/api/share-links`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json', Authorization: `Bearer ${token}` },
    body: JSON.stringify({ target, targetId, label: 'For the customer', expiresInDays: 7 }),
  })
  if (response.status !== 201) throw new Error(`creating the link answered ${response.status}: ${await response.text()}`)
  const body = (await response.json()) as { shareLink: { id: string }; token: string }
  return { id: body.shareLink.id, token: body.token, path: `/shared/${body.token}` }
}
