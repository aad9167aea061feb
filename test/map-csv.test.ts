import { describe, it, expect } from 'vitest';
import { parseMachineCsv } from '../src/machine/csv.js';
import { pointsToGrid } from '../src/machine/fromPoints.js';
import { buildMachineMap, type GridInput } from '../src/machine/map.js';
import { gridMapSchema, pointsMapSchema } from '../src/machine/schema.js';
import { ModelError } from '../src/problem.js';
import { catchModelError } from './support/modelError.js';

// Reference for every check here: the same invented machine written as a JSON document; a CSV in
// long format (one row per point) must carry exactly the same data (common practice).

const gridJson = {
  kind: 'grid',
  description: 'invented test machine',
  speedRpm: [0, 3000, 6000],
  torqueNm: [-100, 0, 100],
  lossW: [
    [400, 100, 400],
    [900, 450, 1000],
    [1700, 900, 1800],
  ],
  maxTorqueNm: [100, 100, 50],
  minTorqueNm: [-100, -100, -50],
  maxSpeedRpm: 6000,
  reverse: false,
};

// Rows deliberately out of order, the envelope table first, comments and blank lines between.
const gridCsv = `# invented test machine, loss per operating point
# maxSpeedRpm=6000
# reverse=false
# description=invented test machine
speedRpm,maxTorqueNm,minTorqueNm
0,100,-100
3000,100,-100
6000,50,-50

speedRpm,torqueNm,lossW
3000,-100,900
0,-100,400
0,0,100
0,100,400
3000,0,450
3000,100,1000
6000,100,1800
6000,0,900
6000,-100,1700
`;

function csvError(text: string, kind: 'grid' | 'points'): ModelError {
  return catchModelError(() => parseMachineCsv(text, kind));
}

describe('parseMachineCsv (grid)', () => {
  it('gives the same document and canonical map as the JSON form', () => {
    const fromCsv = gridMapSchema.parse(parseMachineCsv(gridCsv, 'grid'));
    const fromJson = gridMapSchema.parse(gridJson);
    expect(fromCsv).toEqual(fromJson);
    const prov = { source: 'grid' as const, filledCells: 0, extrapolatedCells: 0, zeroSpeedLossChangeW: 0, zeroSpeedTorqueChangeNm: 0, notes: [] };
    const a = buildMachineMap('m', fromCsv as unknown as GridInput, prov);
    const b = buildMachineMap('m', fromJson as unknown as GridInput, prov);
    expect(a).toEqual(b);
  });

  it('reads an efficiency grid with empty cells as null', () => {
    const text = `# maxSpeedRpm=3000
speedRpm,torqueNm,efficiency
0,-50,
0,0,
0,50,
3000,-50,0.9
3000,0,
3000,50,0.92
speedRpm,maxTorqueNm,minTorqueNm
0,50,-50
3000,50,-50
`;
    const doc = gridMapSchema.parse(parseMachineCsv(text, 'grid'));
    expect(doc.efficiency).toEqual([
      [null, null, null],
      [0.9, null, 0.92],
    ]);
    expect(doc.lossW).toBeUndefined();
    expect(doc.reverse).toBe(true);
  });

  it('refuses a missing speed–torque combination, naming the line', () => {
    const text = gridCsv.replace('6000,0,900\n', '');
    const e = csvError(text, 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.message).toContain('speedRpm=6000, torqueNm=0');
    expect(e.path).toBe('csv line 17 column torqueNm'); // speed 6000 first appears on line 17
  });

  it('refuses a duplicate row, naming both lines', () => {
    const text = gridCsv.replace('6000,0,900\n', '6000,0,900\n3000,-100,905\n');
    const e = csvError(text, 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.path).toBe('csv line 19 column torqueNm');
    expect(e.message).toContain('first on line 11');
  });

  it('refuses an envelope that misses a grid speed', () => {
    const e = csvError(gridCsv.replace('3000,100,-100\n', ''), 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.message).toContain('no row for grid speed 3000');
  });
});

const pointsJson = {
  kind: 'points',
  points: [] as Array<Record<string, number>>,
  envelope: { speedRpm: [0, 2000, 4000], maxTorqueNm: [120, 120, 60], minTorqueNm: [-120, -120, -60] },
  maxSpeedRpm: 4000,
  fit: { speedDegree: 2, torqueDegree: 2 },
  grid: { speedSteps: 9, torqueSteps: 13 },
};
let pointsCsv = `# maxSpeedRpm=4000
# speedDegree=2
# torqueDegree=2
# speedSteps=9
# torqueSteps=13
speedRpm,torqueNm,electricalW,efficiency
`;
for (let rpm = 500; rpm <= 4000; rpm += 500) {
  for (const t of [-60, -20, 20, 60]) {
    const w = (rpm * 2 * Math.PI) / 60;
    const pMech = t * w;
    const loss = 120 + 0.3 * w + 0.02 * t * t;
    if (t > 0) {
      const eff = pMech / (pMech + loss);
      pointsJson.points.push({ speedRpm: rpm, torqueNm: t, efficiency: eff });
      pointsCsv += `${rpm},${t},,${eff}\n`;
    } else {
      pointsJson.points.push({ speedRpm: rpm, torqueNm: t, electricalW: pMech + loss });
      pointsCsv += `${rpm},${t},${pMech + loss},\n`;
    }
  }
}
pointsCsv += `speedRpm,maxTorqueNm,minTorqueNm
0,120,-120
2000,120,-120
4000,60,-60
`;

describe('parseMachineCsv (points)', () => {
  it('gives the same document and canonical map as the JSON form', () => {
    const fromCsv = pointsMapSchema.parse(parseMachineCsv(pointsCsv, 'points'));
    const fromJson = pointsMapSchema.parse(pointsJson);
    expect(fromCsv).toEqual(fromJson);
    const a = pointsToGrid(fromCsv);
    const b = pointsToGrid(fromJson);
    expect(buildMachineMap('p', a.grid, a.provenance)).toEqual(buildMachineMap('p', b.grid, b.provenance));
  });

  it('refuses a row that fills both electricalW and efficiency', () => {
    const text = pointsCsv.replace(/^500,-60,[^,]*,$/m, '500,-60,1234,0.9');
    const lines = text.split('\n');
    const n = lines.findIndex((l) => l.startsWith('500,-60,')) + 1;
    const e = csvError(text, 'points');
    expect(e.code).toBe('map-invalid');
    expect(e.path).toBe(`csv line ${n} column electricalW`);
  });
});

describe('parseMachineCsv (malformed)', () => {
  it('reports a non-numeric cell with its line and column', () => {
    const e = csvError(gridCsv.replace('0,0,100', '0,zero,100'), 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.path).toBe('csv line 13 column torqueNm');
    expect(e.message).toContain('"zero" is not a number');
  });

  it('reports an unknown column at its header line', () => {
    const e = csvError(gridCsv.replace('speedRpm,torqueNm,lossW', 'speedRpm,torqueNm,lossKW'), 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.path).toBe('csv line 10 column 3');
    expect(e.message).toContain('lossKW');
  });

  it('reports an unclosed quote with a line reference', () => {
    const e = csvError(gridCsv.replace('6000,0,900', '6000,"0,900'), 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.path).toMatch(/^csv line \d+/);
    expect(e.message).toContain('malformed CSV');
  });

  it('reports a ragged row with its line', () => {
    const e = csvError(gridCsv.replace('0,100,400', '0,100,400,7'), 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.path).toBe('csv line 14');
  });

  it('reports an unknown setting and a missing speed limit', () => {
    let e = csvError(gridCsv.replace('# maxSpeedRpm=6000', '# maxSpeedRmp=6000'), 'grid');
    expect(e.path).toBe('csv line 2');
    expect(e.message).toContain('unknown setting "maxSpeedRmp"');
    e = csvError(gridCsv.replace('# maxSpeedRpm=6000\n', ''), 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.message).toContain('maxSpeedRpm is missing');
  });

  it('reports a missing envelope table', () => {
    const e = csvError(gridCsv.replace(/speedRpm,maxTorqueNm[^]*?\n\n/, ''), 'grid');
    expect(e.code).toBe('map-invalid');
    expect(e.message).toContain('no envelope table');
  });
});
