/**
 * Undo steps registered as things start, run newest first at the end, also after a failure or a signal.
 * One failing step does not keep the others from running; its error is reported.
 */
export class CleanupStack {
  private readonly steps: { label: string; run: () => Promise<unknown> | unknown }[] = []

  push(label: string, run: () => Promise<unknown> | unknown): void {
    this.steps.push({ label, run })
  }

  /** Runs every step once; tells whether all of them succeeded. */
  async runAll(report: (line: string) => void = (line) => console.error(line)): Promise<boolean> {
    let ok = true
    for (let step = this.steps.pop(); step !== undefined; step = this.steps.pop()) {
      try {
        await step.run()
      } catch (error) {
        ok = false
        report(`Could not ${step.label}: ${error instanceof Error ? error.message : String(error)}`)
      }
    }
    return ok
  }
}
