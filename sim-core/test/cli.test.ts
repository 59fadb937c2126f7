import { spawnSync } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { dirname, join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { afterAll, afterEach, describe, expect, it, vi } from 'vitest'
import { main, type CliIo } from '../src/cli.ts'
import { computeBalance, formatQuantity, parseScenario, type Scenario } from '../src/index.ts'
import { runPull } from '../src/pull/index.ts'

const here = dirname(fileURLToPath(import.meta.url))
const repoRoot = resolve(here, '../..')
const examples = join(repoRoot, 'examples')
const fourCylinder = join(examples, 'four-cylinder-boost-only.json')
const sweepFile = join(examples, 'spring-by-ratio.sweep.json')

interface Run {
  code: number
  stdout: string
  stderr: string
}

async function run(...argv: string[]): Promise<Run> {
  let stdout = ''
  let stderr = ''
  const io: CliIo = { stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), cwd: repoRoot }
  const code = await main(argv, io)
  return { code, stdout, stderr }
}

const scratch = mkdtempSync(join(tmpdir(), 'crackpoint-cli-'))
afterAll(() => rmSync(scratch, { recursive: true, force: true }))
function writeJson(name: string, value: unknown): string {
  const path = join(scratch, name)
  writeFileSync(path, typeof value === 'string' ? value : JSON.stringify(value))
  return path
}

async function exampleScenario(): Promise<Scenario> {
  const { readFile } = await import('node:fs/promises')
  const parsed = parseScenario(JSON.parse(await readFile(fourCylinder, 'utf8')))
  if (!parsed.ok) throw new Error('the example does not parse')
  return parsed.scenario
}

describe('sim balance', () => {
  it('prints areas, spring, crack and full-open boost, forces at crack and the ratio range in US units', async () => {
    const r = await run('balance', fourCylinder)
    expect(r.code).toBe(0)
    expect(r.stderr).toBe('')
    const b = computeBalance(await exampleScenario())
    if (b.crack.status !== 'opens' || b.fullOpen.status !== 'opens') throw new Error('the example should open')
    expect(r.stdout).toContain(`crack boost      ${formatQuantity('pressure', 'us', b.crack.boostPa)}`)
    expect(r.stdout).toContain(`full-open boost  ${formatQuantity('pressure', 'us', b.fullOpen.boostPa)}`)
    expect(r.stdout).toContain(formatQuantity('area', 'us', b.areas.valveM2))
    expect(r.stdout).toContain(formatQuantity('force', 'us', b.seatForceN))
    expect(r.stdout).toMatch(/Forces at crack/)
    expect(r.stdout).toMatch(/^ 1\.00 .*psi/m)
    expect(r.stdout).toMatch(/^ 2\.00 .*psi/m)
    expect(r.stdout).toMatch(/hardware makers' limits/)
  })

  it('prints the same balance in metric units', async () => {
    const r = await run('balance', fourCylinder, '--units', 'metric')
    const b = computeBalance(await exampleScenario())
    if (b.crack.status !== 'opens') throw new Error('the example should open')
    expect(r.code).toBe(0)
    expect(r.stdout).toContain(`crack boost      ${formatQuantity('pressure', 'metric', b.crack.boostPa)}`)
    expect(r.stdout).toContain(' mm²')
    expect(r.stdout).not.toContain(' psi')
  })

  it('prints the balance result as JSON, in SI, with --json', async () => {
    const r = await run('balance', fourCylinder, '--json')
    expect(r.code).toBe(0)
    const expected = JSON.parse(JSON.stringify(computeBalance(await exampleScenario()))) as unknown
    expect(JSON.parse(r.stdout)).toEqual(expected)
  })

  it('shows the bottle, what the top port gets, and the warning of a hot CO₂ bottle', async () => {
    const r = await run('balance', join(examples, 'v8-twin-co2-hot-day.json'))
    expect(r.code).toBe(0)
    expect(r.stdout).toMatch(/above the critical temperature: no liquid/)
    expect(r.stdout).toMatch(/Warning: .*rises fast with temperature/)
  })

  it('exits 1 naming every bad field, and prints nothing on stdout', async () => {
    const s = await exampleScenario()
    const bad = writeJson('bad.json', {
      ...s,
      wastegate: { ...s.wastegate, valveDiameterM: -0.01 },
      exhaust: { ...s.exhaust, ratio: 9 },
      colour: 'red',
    })
    const r = await run('balance', bad)
    expect(r.code).toBe(1)
    expect(r.stdout).toBe('')
    expect(r.stderr).toContain('is not a valid scenario')
    expect(r.stderr).toContain('wastegate.valveDiameterM: must be greater than 0')
    expect(r.stderr).toContain('exhaust.ratio: must be at most 4')
    expect(r.stderr).toMatch(/colour: is not a known field/)
  })

  it('exits 1 for a missing file and for a file that is not JSON', async () => {
    const missing = await run('balance', join(scratch, 'nowhere.json'))
    expect(missing.code).toBe(1)
    expect(missing.stderr).toMatch(/cannot read .*nowhere\.json: no such file/)
    const broken = await run('balance', writeJson('broken.json', '{ "engine": '))
    expect(broken.code).toBe(1)
    expect(broken.stderr).toMatch(/broken\.json is not valid JSON/)
  })

  it('reads a relative file name from the folder the command was typed in', async () => {
    const r = await run('balance', 'examples/four-cylinder-boost-only.json')
    expect(r.code).toBe(0)
  })
})

describe('sim pull', () => {
  it('prints the metrics, flags, a coarse series and the solver statistics of one pull', async () => {
    const r = await run('pull', fourCylinder)
    expect(r.code).toBe(0)
    const pull = runPull(await exampleScenario())
    const settled = pull.metrics.settledBoostPa
    if (settled === null) throw new Error('the example should settle')
    expect(r.stdout).toMatch(new RegExp(`settled boost\\s+${formatQuantity('pressure', 'us', settled).replace('.', '\\.')}`))
    expect(r.stdout).toMatch(/static balance at the settled lift\s+[\d.]+ psi/)
    expect(r.stdout).toMatch(/Flags\n {2}(none|• )/)
    expect(r.stdout).toMatch(/^ 0\.00 +2500 /m)
    expect(r.stdout).toMatch(/^ 4\.00 +7000 /m)
    expect(r.stdout).toMatch(/outcome\s+converged/)
    expect(r.stdout).toMatch(/Note: Ratio mode/)
  })

  it('prints the whole pull as JSON with --json', async () => {
    const r = await run('pull', fourCylinder, '--json')
    expect(r.code).toBe(0)
    const out = JSON.parse(r.stdout) as { series: { timeS: number[] }; metrics: { crackBoostPa: number }; stats: { outcome: string } }
    const pull = runPull(await exampleScenario())
    expect(out.stats.outcome).toBe('converged')
    expect(out.series.timeS).toHaveLength(pull.series.timeS.length)
    expect(out.metrics.crackBoostPa).toBe(pull.metrics.crackBoostPa)
  })

  it('shows the gas a CO₂-fed pull spends and the pulls per bottle', async () => {
    const r = await run('pull', join(examples, 'v8-twin-co2-top-port.json'), '--units', 'metric')
    expect(r.code).toBe(0)
    expect(r.stdout).toMatch(/gas used this pull\s+[\d.]+ g/)
    expect(r.stdout).toMatch(/pulls per bottle\s+(\d+|—)/)
  })

  it('exits 1 naming the bad field before running anything', async () => {
    const s = await exampleScenario()
    const r = await run('pull', writeJson('bad-pull.json', { ...s, engine: { ...s.engine, rpmEnd: 1000 } }))
    expect(r.code).toBe(1)
    expect(r.stdout).toBe('')
    expect(r.stderr).toContain('engine.rpmEnd: must be larger than engine.rpmStart')
  })
})

describe('sim sweep', () => {
  it('prints every point of a static sweep, first axis slowest, with the axis values in the chosen units', async () => {
    const r = await run('sweep', sweepFile, '--units', 'metric')
    expect(r.code).toBe(0)
    expect(r.stdout).toContain('35 points over springs.0.seatForceN × 7, exhaust.ratio × 5')
    expect(r.stdout).toContain('springs.0.seatForceN (N)')
    const rows = r.stdout.split('\n').filter((line) => /^\s*\d+\s{2}/.test(line))
    expect(rows).toHaveLength(35)
    expect(rows[0]).toMatch(/^ 0\s+150\s+1\s+opens\s+[\d.]+ kPa\s+[\d.]+ kPa$/)
    expect(rows[34]).toMatch(/^34\s+450\s+2\s+opens/)
  })

  it('prints the points as JSON with --json, matching the static evaluation', async () => {
    const r = await run('sweep', sweepFile, '--json')
    expect(r.code).toBe(0)
    const out = JSON.parse(r.stdout) as { pointCount: number; points: { index: number; values: number[]; static: { crackBoostPa: number } }[] }
    expect(out.pointCount).toBe(35)
    expect(out.points).toHaveLength(35)
    expect(out.points[7]?.values).toEqual([200, 1.5])
    const s = await exampleScenario()
    const crack = computeBalance({ ...s, springs: [{ from: 'seat', seatForceN: 200, rateNPerM: 5000 }], exhaust: { ...s.exhaust, ratio: 1.5 } }).crack
    expect(crack.status === 'opens' ? crack.boostPa : null).toBeCloseTo(out.points[7]?.static.crackBoostPa ?? NaN, 9)
  })

  it('exits 1 naming the scenario field, the axis and unknown keys of a bad sweep file', async () => {
    const s = await exampleScenario()
    const badScenario = await run('sweep', writeJson('s1.json', { scenario: { ...s, exhaust: { ...s.exhaust, ratio: 0 } }, axes: [{ path: 'exhaust.ratio', values: [1] }] }))
    expect(badScenario.code).toBe(1)
    expect(badScenario.stderr).toContain('scenario.exhaust.ratio: must be at least 0.5')
    const badAxis = await run('sweep', writeJson('s2.json', { scenario: s, axes: [{ path: 'wastegate.colour', values: [1] }], extra: 1 }))
    expect(badAxis.code).toBe(1)
    expect(badAxis.stderr).toMatch(/extra: is not a known field/)
    const badPath = await run('sweep', writeJson('s3.json', { scenario: s, axes: [{ path: 'wastegate.colour', values: [1] }] }))
    expect(badPath.stderr).toMatch(/axes\.0\.path: "wastegate\.colour" is not a number in this scenario/)
    const badLevel = await run('sweep', writeJson('s4.json', { scenario: s, axes: [{ path: 'exhaust.ratio', values: [1] }], level: 'fast' }))
    expect(badLevel.code).toBe(1)
    expect(badLevel.stderr).toMatch(/level: /)
  })
})

describe('sim sweep at the dynamic level', () => {
  it('puts a whole pull beside the static balance of each point for level "both"', async () => {
    const s = await exampleScenario()
    const file = writeJson('both.json', { scenario: s, level: 'both', axes: [{ path: 'exhaust.ratio', values: [1.3, 1.7] }] })
    const r = await run('sweep', file)
    expect(r.code, r.stderr).toBe(0)
    expect(r.stdout).toContain('Sweep (static and dynamic levels)')
    expect(r.stdout).toMatch(/pull crack\s+settled\s+peak\s+flags/)
    const json = await run('sweep', file, '--json')
    const out = JSON.parse(json.stdout) as { points: { static?: unknown; dynamic?: { outcome: string; settledBoostPa: number } }[] }
    expect(out.points).toHaveLength(2)
    expect(out.points.every((p) => p.static !== undefined && p.dynamic?.outcome === 'converged')).toBe(true)
  })

  it('runs only pulls for level "dynamic", and refuses more points than the command line runs', async () => {
    const s = await exampleScenario()
    const one = await run('sweep', writeJson('dyn.json', { scenario: s, level: 'dynamic', axes: [{ path: 'exhaust.ratio', values: [1.5] }] }), '--json')
    const out = JSON.parse(one.stdout) as { points: { static?: unknown; dynamic?: unknown }[] }
    expect(out.points[0]?.static).toBeUndefined()
    expect(out.points[0]?.dynamic).toBeDefined()
    const big = await run('sweep', writeJson('big.json', {
      scenario: s,
      level: 'dynamic',
      axes: [{ path: 'exhaust.ratio', range: { from: 1, to: 2, count: 100 } }, { path: 'springs.0.seatForceN', range: { from: 200, to: 400, count: 11 } }],
    }))
    expect(big.code).toBe(1)
    expect(big.stderr).toMatch(/axes: give 1100 points; the command line runs at most 1000 at the dynamic level/)
  })
})

describe('sim solve', () => {
  const v8 = join(examples, 'v8-twin-co2-top-port.json')

  it('prints the seat force and its bench crack pressure for a crack boost, read in psi', async () => {
    const r = await run('solve', fourCylinder, '--for', 'seat-force', '--target', '12')
    expect(r.code, r.stderr).toBe(0)
    expect(r.stdout).toContain('The spring seat force for 12.0 psi of crack boost')
    const s = await exampleScenario()
    // Put the printed seat force back in: the balance cracks at 12 psi (to the printed 0.1 lbf).
    const lbf = Number(/spring seat force\s+([\d.]+) lbf/.exec(r.stdout)![1])
    const back = computeBalance({ ...s, springs: [{ from: 'seat', seatForceN: lbf * 4.448222, rateNPerM: s.springs[0]!.rateNPerM }] })
    expect(back.crack.status === 'opens' && Math.abs(back.crack.boostPa / 6894.757 - 12)).toBeLessThan(0.01)
    expect(r.stdout).toMatch(/bench crack pressure in this gate\s+[\d.]+ psi/)
  })

  it('prints SI with the CLI’s names under --json, and reads the target in kPa with --units metric', async () => {
    const r = await run('solve', v8, '--for', 'setpoint', '--target', '124', '--units', 'metric', '--ratio-band', '1.4:1.8', '--json')
    expect(r.code, r.stderr).toBe(0)
    const out = JSON.parse(r.stdout)
    expect(out).toMatchObject({ status: 'solved', unknown: 'setpoint', target: 'crack', targetBoostPa: 124_000 })
    expect(out.setpointPa).toBe(out.value)
    expect(out.band.map((b: { ratio: number }) => b.ratio)).toEqual([1.4, 1.8])
    // The two ends of the band miss by as much on either side.
    expect(out.band[0].boostPa - 124_000).toBeCloseTo(124_000 - out.band[1].boostPa, 3)
  })

  it('says when a target is out of reach, with the nearest value', async () => {
    const r = await run('solve', v8, '--for', 'setpoint', '--target', '3')
    expect(r.code).toBe(0)
    expect(r.stdout).toMatch(/Out of reach: the target is below what the spring alone holds/)
    expect(r.stdout).toMatch(/Nearest: regulator setpoint 0\.0 psi/)
  })

  it('exits 1 naming the field when the arrangement has no such unknown, and 2 for bad solve options', async () => {
    const r = await run('solve', fourCylinder, '--for', 'duty', '--target', '12')
    expect(r.code).toBe(1)
    expect(r.stderr).toMatch(/control\.kind: must be a three- or four-port solenoid/)
    for (const argv of [
      ['solve', fourCylinder, '--target', '12'],
      ['solve', fourCylinder, '--for', 'spring', '--target', '12'],
      ['solve', fourCylinder, '--for', 'seat-force'],
      ['solve', fourCylinder, '--for', 'seat-force', '--target', 'lots'],
      ['solve', fourCylinder, '--for', 'seat-force', '--target', '12', '--ratio-band', '1.8:1.4'],
      ['solve', fourCylinder, '--for', 'seat-force', '--target', '12', '--at', 'peak'],
      ['balance', fourCylinder, '--for', 'seat-force'],
    ]) {
      const bad = await run(...argv)
      expect(bad.code, argv.join(' ')).toBe(2)
      expect(bad.stderr).toContain('Usage: npm run sim --')
    }
  })
})

describe('command line usage', () => {
  it('exits 2 with the usage for an unknown command, a missing file, bad units or an unknown option', async () => {
    for (const argv of [['frob', 'x.json'], ['balance'], ['balance', fourCylinder, '--units', 'imperial'], ['balance', fourCylinder, '--colour'], []]) {
      const r = await run(...argv)
      expect(r.code, argv.join(' ')).toBe(2)
      expect(r.stderr).toContain('Usage: npm run sim --')
      expect(r.stdout).toBe('')
    }
    expect((await run('balance', fourCylinder, '--units', 'imperial')).stderr).toMatch(/--units must be "us" or "metric"/)
  })

  it('prints the usage for --help', async () => {
    const r = await run('--help')
    expect(r.code).toBe(0)
    expect(r.stdout).toContain('balance <scenario.json>')
  })
})

// Starting npm and tsx takes seconds on a busy machine: each test's limit is the spawn's own minute.
describe('npm run sim from the repository root', { timeout: 60_000 }, () => {
  const npm = (...args: string[]) => {
    const env = { ...process.env }
    delete env.INIT_CWD
    return spawnSync('npm', ['run', '-s', 'sim', '--', ...args], { cwd: repoRoot, env, encoding: 'utf8', timeout: 60_000 })
  }

  it('forwards to the CLI and resolves the file from the root', () => {
    const r = npm('balance', 'examples/four-cylinder-boost-only.json', '--json')
    expect(r.status, r.stderr).toBe(0)
    expect(JSON.parse(r.stdout)).toHaveProperty('crack.status', 'opens')
  })

  it('exits 1 with the schema message for bad input', () => {
    const r = npm('balance', writeJson('root-bad.json', { engine: { displacementM3: -1 } }))
    expect(r.status).toBe(1)
    expect(r.stderr).toContain('engine.displacementM3: must be greater than 0')
  })
})

/** A line of a JavaScript stack trace ("    at fn (file:line:col)"). */
const STACK_FRAME = /^\s+at /m

describe('no command prints a stack trace', () => {
  // A 78 mm diaphragm at 12.7 mm (0.5 in) of lift sweeps 60.7 cm³ (a real gate's size; common practice, no source).
  // A top chamber of 50 cm³ cannot hold that stroke. Each number is fine alone; the schema refuses them together,
  // naming the field, and every command says so the same way.
  const bigDiaphragm = async () => {
    const s = await exampleScenario()
    return { ...s, wastegate: { ...s.wastegate, actuatorDiameterM: 0.078, maxLiftM: 0.0127, topChamberVolumeM3: 50e-6 } }
  }

  it('pull and balance: a scenario whose numbers do not fit together exits 1 with the field and the problem', async () => {
    const file = writeJson('big-diaphragm.json', await bigDiaphragm())
    expect(parseScenario(JSON.parse(readFileSync(file, 'utf8'))).ok).toBe(false)
    for (const command of ['pull', 'balance']) {
      const r = await run(command, file)
      expect(r.code, command).toBe(1)
      expect(r.stdout, command).toBe('')
      expect(r.stderr, command).toMatch(/^ {2}wastegate\.topChamberVolumeM3: must exceed the volume the piston sweeps at full lift \(60\.7 cm³\)/m)
      expect(r.stderr, command).not.toMatch(STACK_FRAME)
    }
  })

  it('sweep: names the axis value that makes a point impossible, exits 1, prints no table, at either level', async () => {
    const s = await exampleScenario()
    const file = writeJson('sweep-diaphragm.json', {
      scenario: { ...s, wastegate: { ...s.wastegate, maxLiftM: 0.0127, topChamberVolumeM3: 50e-6 } },
      level: 'dynamic',
      axes: [{ path: 'wastegate.actuatorDiameterM', values: [0.0555, 0.078] }],
    })
    const statics = writeJson('sweep-diaphragm-static.json', { ...JSON.parse(readFileSync(file, 'utf8')), level: 'static' })
    for (const f of [file, statics]) {
      const r = await run('sweep', f)
      expect(r.code).toBe(1)
      expect(r.stdout).toBe('')
      expect(r.stderr).toContain('axes.0.values.1: 0.078 gives wastegate.topChamberVolumeM3 that must exceed the volume the piston sweeps')
      expect(r.stderr).not.toMatch(STACK_FRAME)
    }
  })

  it('balance, pull and sweep: a file the schema refuses exits 1 without a stack', async () => {
    const s = await exampleScenario()
    const bad = writeJson('bad-all.json', { ...s, wastegate: { ...s.wastegate, maxLiftM: -1 } })
    const badSweep = writeJson('bad-sweep.json', { scenario: { ...s, wastegate: { ...s.wastegate, maxLiftM: -1 } }, axes: [{ path: 'exhaust.ratio', values: [1.5] }] })
    for (const [command, file] of [['balance', bad], ['pull', bad], ['sweep', badSweep]] as const) {
      const r = await run(command, file)
      expect(r.code, command).toBe(1)
      expect(r.stderr, command).toMatch(/maxLiftM: must be greater than 0/)
      expect(r.stderr, command).not.toMatch(STACK_FRAME)
    }
  })

  // Starting npm and tsx takes seconds on a busy machine: the test's own limit is the spawn's.
  it('through npm from the repository root, too', { timeout: 60_000 }, async () => {
    const env = { ...process.env }
    delete env.INIT_CWD
    const file = writeJson('big-diaphragm-npm.json', await bigDiaphragm())
    const r = spawnSync('npm', ['run', '-s', 'sim', '--', 'pull', file], { cwd: repoRoot, env, encoding: 'utf8', timeout: 60_000 })
    expect(r.status, r.stderr).toBe(1)
    expect(r.stderr).toContain('wastegate.topChamberVolumeM3: must ')
    expect(r.stderr).not.toMatch(STACK_FRAME)
  })
})

describe('a fault in the tool', () => {
  // The model's modules replaced by ones that break, to see what the command line makes of each kind of error.
  afterEach(() => {
    vi.doUnmock('../src/pull/index.ts')
    vi.doUnmock('../src/balance.ts')
    vi.resetModules()
  })
  async function mainWith(path: '../src/pull/index.ts' | '../src/balance.ts', name: string, error: () => Error) {
    vi.resetModules()
    vi.doMock(path, async (importOriginal) => ({ ...(await importOriginal<object>()), [name]: () => { throw error() } }))
    return (await import('../src/cli.ts')).main
  }
  async function runWith(m: typeof main, ...argv: string[]): Promise<Run> {
    let stdout = ''
    let stderr = ''
    const code = await m(argv, { stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), cwd: repoRoot })
    return { code, stdout, stderr }
  }
  const oneLineFault = (r: Run) => {
    expect(r.code).toBe(70)
    expect(r.stdout).toBe('')
    expect(r.stderr.trimEnd().split('\n')).toHaveLength(1)
    expect(r.stderr).toMatch(/a fault in the tool, not in the file/)
    expect(r.stderr).not.toMatch(STACK_FRAME)
  }

  it('pull: an error that is not a RangeError exits 70 with one line that says so', async () => {
    const m = await mainWith('../src/pull/index.ts', 'runPull', () => new TypeError('state.at is not a function'))
    const r = await runWith(m, 'pull', fourCylinder)
    oneLineFault(r)
    expect(r.stderr).toContain('sim pull')
    expect(r.stderr).toContain('TypeError: state.at is not a function')
  })

  it('balance: the same', async () => {
    const m = await mainWith('../src/balance.ts', 'computeBalance', () => new Error('unreachable arrangement'))
    oneLineFault(await runWith(m, 'balance', fourCylinder))
  })

  it('sweep: the same, naming the point', async () => {
    const m = await mainWith('../src/pull/index.ts', 'evaluateDynamicPoint', () => new TypeError('boom'))
    const s = await exampleScenario()
    const r = await runWith(m, 'sweep', writeJson('fault-sweep.json', { scenario: s, level: 'dynamic', axes: [{ path: 'exhaust.ratio', values: [1.5] }] }))
    oneLineFault(r)
    expect(r.stderr).toContain('at point 0 (exhaust.ratio = 1.5)')
  })

  it('a RangeError of the engine itself (runaway recursion) is a fault, not bad input', async () => {
    const m = await mainWith('../src/pull/index.ts', 'runPull', () => new RangeError('Maximum call stack size exceeded'))
    oneLineFault(await runWith(m, 'pull', fourCylinder))
  })

  it('a model RangeError that names no field is reported as input, and says the model named no field', async () => {
    const m = await mainWith('../src/pull/index.ts', 'runPull', () => new RangeError('massKg must be a positive number, got NaN'))
    const r = await runWith(m, 'pull', fourCylinder)
    expect(r.code).toBe(1)
    expect(r.stderr).toContain('  massKg must be a positive number, got NaN')
    expect(r.stderr).toContain('the model names no field for this')
    expect(r.stderr).not.toMatch(STACK_FRAME)
  })
})
