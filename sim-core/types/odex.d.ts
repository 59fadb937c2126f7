// odex ships TypeScript source without declarations, and its source fails `strict`; this mirrors its public API.
// The tsconfig files map "odex" here by "types/odex", without the extension: tsc finds this file, while tsx (which
// applies tsconfig paths at run time, falling back to the package when a mapped path resolves to nothing it can
// load) and Node import the package itself. Vite and vitest do not read paths at all.
declare module 'odex' {
  export type Derivative = (x: number, y: number[]) => number[]
  export type OutputFunction = (
    nr: number,
    xOld: number,
    x: number,
    y: number[],
    dense?: (c: number, x: number) => number,
  ) => boolean | void
  export enum Outcome {
    Converged = 0,
    MaxStepsExceeded = 1,
    EarlyReturn = 2,
  }
  export interface SolveResult {
    y: number[]
    outcome: Outcome
    nStep: number
    xEnd: number
    nAccept: number
    nReject: number
    nEval: number
  }
  export class Solver {
    constructor(n: number)
    n: number
    maxSteps: number
    initialStepSize: number
    maxStepSize: number
    denseOutput: boolean
    denseComponents: number[] | undefined
    relativeTolerance: number | number[]
    absoluteTolerance: number | number[]
    debug: boolean
    grid(dt: number, out: (xOut: number, yOut: number[]) => unknown): OutputFunction
    solve(f: Derivative, x: number, y0: number[], xEnd: number, solOut?: OutputFunction): SolveResult
  }
}
