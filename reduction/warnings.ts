/**
 * Collects warnings as plain sentences (FORMATS §4 `warnings`) and merges repeats across steps: a sentence raised at
 * steps 0, 3 and 4 is reported once as "… (steps 0, 3, 4)."
 */

// MAIN //

export class WarningCollector {
  private readonly perStep = new Map<string, number[]>();
  private readonly globals: string[] = [];

  /** A warning that concerns one step. The sentence must end with a full stop. */
  add(sentence: string, step: number): void {
    const list = this.perStep.get(sentence);
    if (list) {
      if (!list.includes(step)) list.push(step);
    } else {
      this.perStep.set(sentence, [step]);
    }
  }

  /** A warning about the whole scan. */
  global(sentence: string): void {
    if (!this.globals.includes(sentence)) this.globals.push(sentence);
  }

  /** All warnings, global ones first, per-step ones with their steps appended. */
  sentences(listSteps: (steps: number[]) => string): string[] {
    const out = [...this.globals];
    for (const [s, steps] of this.perStep) {
      const sorted = [...steps].sort((a, b) => a - b);
      const base = s.endsWith('.') ? s.slice(0, -1) : s;
      out.push(`${base} (${listSteps(sorted)}).`);
    }
    return out;
  }
}
