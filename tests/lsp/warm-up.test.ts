// The start-up warm-up of the language code: its scenes stay valid as the language grows (so the
// warm-up runs the same code paths a real scene does), and every round runs.
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../grammar/index';
import { WARM_UP_SCENES, warmUpAnalysis } from '../../server/src/lsp/warm-up';

describe('analysis warm-up', () => {
  it('has one error-free scene per space', () => {
    const spaces = WARM_UP_SCENES.map((text) => {
      const a = analyzeText(text);
      expect(a.diagnostics).toEqual([]);
      return a.scene.space;
    });
    expect(spaces.sort()).toEqual(['3d', 'axisymmetric', 'planar']);
  });

  it('analyses every scene each round, one per scheduled turn, then says it is done', () => {
    const turns: (() => void)[] = [];
    let done = false;
    warmUpAnalysis(2, (next) => turns.push(next), () => (done = true));
    let ran = 0;
    while (turns.length > 0 && ran < 100) {
      turns.shift()!();
      ran++;
    }
    // One turn per analysis (2 rounds × 3 scenes) and a last one that finds nothing left.
    expect(ran).toBe(2 * WARM_UP_SCENES.length + 1);
    expect(done).toBe(true);
  });
});
