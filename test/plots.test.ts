import { describe, expect, it } from 'vitest';
import { plotMachine } from '../src/report/svg/plotMachine.js';
import { plotTable } from '../src/report/svg/plotTable.js';
import { buildDrivetrain } from '../src/solver/drivetrain.js';
import { buildTable } from '../src/solver/table.js';
import { MODES } from '../src/solver/types.js';
import { AXLE_DOC, testMachines } from './support/tableFixture.js';
import { parseXml } from './support/xmlCheck.js';

describe('XML well-formedness check', () => {
  it('accepts well-formed XML and rejects each kind of fault', () => {
    // XML 1.0 (W3C Recommendation, 5th ed.), §2.1 well-formed documents, §3.1 tags, §4.6 predefined entities.
    expect(parseXml('<?xml version="1.0"?>\n<a x="1" y=\'&amp;&#60;\'><b/><!-- ok --><c>t &lt; u</c></a>\n').length).toBe(3);
    for (const bad of [
      '<a><b></a></b>',
      '<a x=1/>',
      '<a x="1" x="2"/>',
      '<a>x & y</a>',
      '<a>&nbsp;</a>',
      '<a/><b/>',
      '<a x="1"y="2"/>',
      '<a>',
      '<a x="<"/>',
      '<a><!-- a -- b --></a>',
      '<a id="p"><b id="p"/></a>',
    ]) {
      expect(() => parseXml(bad), bad).toThrow();
    }
  });
});

const maps = testMachines();
const dt = buildDrivetrain('test-axle', AXLE_DOC, (n) => maps.get(n));

describe('table plot', () => {
  const t = buildTable(dt, { speedRpm: { from: -150, to: 2300, steps: 25 }, torqueNm: { from: -2600, to: 2600, steps: 27 } });
  const svg = plotTable(t);
  const els = parseXml(svg);

  it('is well-formed SVG with the envelope path and one outlined, labelled region per mode present', () => {
    expect(els[0]!.name).toBe('svg');
    expect(els[0]!.attrs.get('xmlns')).toBe('http://www.w3.org/2000/svg');
    const env = els.filter((e) => e.attrs.get('id') === 'envelope');
    expect(env.length).toBe(1);
    expect(env[0]!.name).toBe('path');
    expect(env[0]!.attrs.get('d')).toMatch(/^M[-\d.]+,[-\d.]+L/);
    // Modes present, counted from the cells directly.
    const present = new Set<string>();
    for (const code of t.cells.mode) if (code > 0) present.add(MODES[code - 1]!);
    expect(present.size).toBeGreaterThanOrEqual(3);
    const regions = els.filter((e) => e.name === 'path' && e.attrs.get('class') === 'mode-region');
    expect(regions.map((e) => e.attrs.get('data-mode')).sort()).toEqual([...present].sort());
    for (const r of regions) expect(r.attrs.get('d')).toMatch(/^M.*Z$/);
    const labels = els.filter((e) => e.attrs.get('class') === 'mode-label').map((e) => e.attrs.get('data-mode'));
    expect(labels.sort()).toEqual([...present].sort());
    // Efficiency bands exist and axis labels carry units.
    expect(els.filter((e) => e.attrs.get('class') === 'band').length).toBeGreaterThan(3);
    expect(svg).toContain('Wheel speed (rpm)');
    expect(svg).toContain('Wheel torque (N·m)');
  });

  it('uses no external resources and escapes caller text', () => {
    expect(/https?:\/\/(?!www\.w3\.org\/2000\/svg)/.test(svg)).toBe(false);
    expect(svg).not.toMatch(/@import|<image|xlink:href|@font-face/);
    const titled = plotTable(t, { title: 'Axle <A> & "B" \'C\'' });
    parseXml(titled);
    expect(titled).toContain('Axle &lt;A&gt; &amp; &quot;B&quot; &apos;C&apos;');
  });
});

describe('machine map plot', () => {
  const svg = plotMachine(maps.get('test-ring')!);
  const els = parseXml(svg);

  it('is well-formed SVG with efficiency bands, a closed envelope path, axes and a legend', () => {
    const env = els.filter((e) => e.attrs.get('id') === 'envelope');
    expect(env.length).toBe(1);
    expect(env[0]!.attrs.get('d')).toMatch(/^M.*Z$/);
    expect(els.filter((e) => e.attrs.get('class') === 'band').length).toBeGreaterThan(3);
    expect(els.some((e) => e.name === 'g' && e.attrs.get('class') === 'legend')).toBe(true);
    expect(svg).toContain('Speed (rpm)');
    expect(svg).toContain('Torque (N·m)');
    expect(svg).toContain('Machine map: test-ring');
  });
});
