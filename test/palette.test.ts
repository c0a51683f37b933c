/**
 * The report's colours stay apart for the common colour-vision deficiencies and in grey.
 * Outside references: culori's simulation of protanopia, deuteranopia and tritanopia
 * (Machado, Oliveira & Fernandes, IEEE TVCG 2009, severity 1 = full dichromacy) and the
 * CIEDE2000 colour difference (Sharma, Wu & Dalal 2005). Thresholds: a CIEDE2000 difference
 * of 10 or more reads as a different colour at a glance, and 8 CIE L* units apart stay
 * distinct grey levels in print (common practice).
 */
import { describe, expect, it } from 'vitest';
import { converter, differenceCiede2000, filterDeficiencyDeuter, filterDeficiencyProt, filterDeficiencyTrit, parse, type Color } from 'culori';
import { heatColours, policyColours, robotTimeColours, seriesColours, stateColours } from '../reports/html/palette.ts';

const difference = differenceCiede2000();
const lab = converter('lab');
const visions: Record<string, (c: Color) => Color> = {
  normal: (c) => c,
  protanopia: filterDeficiencyProt(1),
  deuteranopia: filterDeficiencyDeuter(1),
  tritanopia: filterDeficiencyTrit(1),
};

function closestPair(colours: readonly string[], vision: (c: Color) => Color): { pair: string; difference: number } {
  let best = { pair: '', difference: Infinity };
  for (let i = 0; i < colours.length; i++) {
    for (let j = i + 1; j < colours.length; j++) {
      const d = difference(vision(parse(colours[i])!), vision(parse(colours[j])!));
      if (d < best.difference) best = { pair: `${colours[i]} / ${colours[j]}`, difference: d };
    }
  }
  return best;
}

const lightness = (hex: string) => lab(parse(hex)!)!.l;

describe('palette', () => {
  for (const [name, colours] of [
    ['robot states', Object.values(stateColours)],
    ['policies', [...policyColours]],
    ['chart series', [...seriesColours]],
    ['heat classes (neighbours)', [...heatColours]],
  ] as const) {
    for (const [vision, simulate] of Object.entries(visions)) {
      it(`${name} stay apart under ${vision}`, () => {
        if (name.startsWith('heat')) {
          // Heat classes are read against their neighbours on a scale: adjacent classes must differ.
          for (let i = 1; i < colours.length; i++) expect(difference(simulate(parse(colours[i - 1])!), simulate(parse(colours[i])!)), `${colours[i - 1]} / ${colours[i]}`).toBeGreaterThanOrEqual(10);
        } else {
          const closest = closestPair(colours, simulate);
          expect(closest.difference, closest.pair).toBeGreaterThanOrEqual(10);
        }
      });
    }
  }

  it('robot time categories step in lightness, so they stay apart printed in grey', () => {
    const levels = robotTimeColours.map(lightness).sort((a, b) => a - b);
    for (let i = 1; i < levels.length; i++) expect(levels[i] - levels[i - 1]).toBeGreaterThanOrEqual(8);
  });

  it('heat classes darken monotonically, so more waiting prints darker', () => {
    const levels = heatColours.map(lightness);
    for (let i = 1; i < levels.length; i++) expect(levels[i]).toBeLessThan(levels[i - 1] - 5);
  });
});
