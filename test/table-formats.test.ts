import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ModelError } from '../src/problem.js';
import { cFloat, cPrefix, tableToCHeader } from '../src/report/cHeader.js';
import { parseTableCsv, TABLE_CSV_COLUMNS, tableToCsv } from '../src/report/tableCsv.js';
import { tableToJson } from '../src/report/tableJson.js';
import { buildDrivetrain } from '../src/solver/drivetrain.js';
import { buildTable } from '../src/solver/table.js';
import { CELL_FLOAT_FIELDS, modeFromCode, type LookupTable } from '../src/solver/tableResult.js';
import { AXLE_DOC, testMachines } from './support/tableFixture.js';

const maps = testMachines();
const dt = buildDrivetrain('test-axle', AXLE_DOC, (n) => maps.get(n));
// Standstill (efficiency undefined), reverse, forward, beyond top speed; braking, zero and motoring torque.
const table: LookupTable = buildTable(
  dt,
  { speedRpm: [-300, 0, 250, 700, 1200, 1700, 2400], torqueNm: { from: -2800, to: 2800, steps: 9 }, modeSwitchMarginW: 250 },
  { hash: 'sha256:0f3a9c' },
);
const K = table.nSpeed * table.nTorque;

const hasGcc = spawnSync('gcc', ['--version']).status === 0;
const work = mkdtempSync(path.join(tmpdir(), 'episplit-table-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

/** Index of the first cell matching a predicate. */
function findCell(pred: (k: number) => boolean): number {
  for (let k = 0; k < K; k++) if (pred(k)) return k;
  throw new Error('no such cell in the test table');
}

describe('table CSV', () => {
  const csv = tableToCsv(table);
  // The data lines; `#` comment lines (caution, hash, parameters) come first.
  const lines = csv.split('\n').filter((l) => !l.startsWith('#'));

  it('opens with the caution and the generation record as comment lines', () => {
    const comments = csv.split('\n').filter((l) => l.startsWith('#'));
    expect(comments.join(' ')).toMatch(/certifies nothing/);
    expect(comments.join(' ')).toContain('parameters');
  });

  it('has the documented header and one row per cell', () => {
    expect(lines[0]).toBe(
      'wheelSpeedRpm,wheelTorqueNm,feasible,mode,sunSpeedRpm,sunTorqueNm,ringSpeedRpm,ringTorqueNm,batteryW,systemEfficiency,frictionBrakeNm',
    );
    expect(TABLE_CSV_COLUMNS.join(',')).toBe(lines[0]);
    expect(lines.length).toBe(K + 2); // header, rows, empty string after the final LF
    expect(lines[K + 1]).toBe('');
  });

  it('round-trips every value exactly, with empty fields for null', () => {
    const cells = parseTableCsv(csv);
    expect(cells.length).toBe(K);
    for (let k = 0; k < K; k++) {
      const i = Math.floor(k / table.nTorque);
      const j = k % table.nTorque;
      const c = cells[k]!;
      expect(c.wheelSpeedRpm).toBe(table.speedRpm[i]);
      expect(c.wheelTorqueNm).toBe(table.torqueNm[j]);
      expect(c.feasible).toBe(table.cells.feasible[k] === 1);
      expect(c.mode).toBe(modeFromCode(table.cells.mode[k]!));
      for (const f of CELL_FLOAT_FIELDS) {
        const v = table.cells[f][k]!;
        if (Number.isNaN(v)) expect(c[f]).toBeNull();
        else expect(Object.is(c[f], v)).toBe(true);
      }
    }
    const infeasible = findCell((k) => table.cells.feasible[k] === 0);
    const fields = lines[1 + infeasible]!.split(',');
    expect(fields.length).toBe(11);
    expect(fields.slice(2)).toEqual(['false', '', '', '', '', '', '', '', '']);
    // Standstill, zero torque: feasible, efficiency undefined → empty field.
    const still = findCell((k) => table.cells.feasible[k] === 1 && Number.isNaN(table.cells.systemEfficiency[k]!));
    expect(lines[1 + still]!.split(',')[9]).toBe('');
  });

  it('refuses a wrong header and malformed values with the field path', () => {
    expect(() => parseTableCsv(csv.replace('batteryW', 'batteryKW'))).toThrow(ModelError);
    const bad = `${lines[0]}\n1,2,true,split,abc,0,0,0,0,0,0\n`;
    try {
      parseTableCsv(bad);
      expect.unreachable();
    } catch (e) {
      expect((e as ModelError).path).toBe('row[1].sunSpeedRpm');
    }
    expect(() => parseTableCsv(`${lines[0]}\n1,2,yes,split,0,0,0,0,0,0,0\n`)).toThrow(/feasible/);
  });
});

describe('table C header', () => {
  const header = tableToCHeader(table);

  it('names everything from the drivetrain name and documents units, parameters, hash, time and caution', () => {
    expect(cPrefix('test-axle')).toBe('TEST_AXLE');
    expect(cPrefix('2-speed--axle')).toBe('T_2_SPEED_AXLE');
    expect(header).toContain('#ifndef TEST_AXLE_TABLE_H');
    expect(header).toContain('#include <stdint.h>');
    expect(header).toContain(`#define TEST_AXLE_N_SPEED ${table.nSpeed}`);
    expect(header).toContain(`#define TEST_AXLE_N_TORQUE ${table.nTorque}`);
    expect(header).toContain('static const float TEST_AXLE_UNUSED test_axle_battery_w[TEST_AXLE_N_SPEED][TEST_AXLE_N_TORQUE]');
    expect(header).toContain('static const uint8_t TEST_AXLE_UNUSED test_axle_feasible[TEST_AXLE_N_SPEED][TEST_AXLE_N_TORQUE]');
    expect(header).toContain('sha256:0f3a9c');
    expect(header).toContain(table.generatedAt);
    expect(header).toContain('explicit list of 7 values, rpm');
    expect(header).toContain('9 values evenly spaced from -2800 to 2800');
    expect(header).toContain('mode-switch margin: 250 W');
    expect(header).toContain('strict braking:    no');
    expect(header).toMatch(/certifies nothing/);
    expect(header).toMatch(/test\s+\* bench|test bench/);
    expect(header).toMatch(/supplier/);
    expect(header).toMatch(/High-voltage work/);
    // The comment block is plain ASCII and the arrays hold no NaN or infinity.
    const body = header.slice(header.indexOf('*/'));
    expect(/[^\x09\x0a\x20-\x7e]/.test(header)).toBe(false);
    expect(/\bnan\b|\binf\b|infinity/i.test(body)).toBe(false);
  });

  it('writes floats with the fewest digits that give the same float', () => {
    // IEEE 754 binary32: 0.1 → 0x3DCCCCCD, 1/3 → 0.333333343 (from memory; 9 digits always suffice).
    expect(cFloat(0.1)).toBe('0.1f');
    expect(cFloat(1 / 3)).toBe('0.33333334f');
    expect(cFloat(100)).toBe('100.0f');
    expect(cFloat(Number.NaN)).toBe('(-1.0e30f)');
  });

  const gccTitle = 'compiles with gcc -std=c99 -Wall -Wextra -Werror -pedantic and a program reads one cell back';
  it.skipIf(!hasGcc)(hasGcc ? gccTitle : `${gccTitle} (skipped: gcc not found on PATH)`, () => {
    const k = findCell((c) => table.cells.feasible[c] === 1 && !Number.isNaN(table.cells.systemEfficiency[c]!) && table.cells.mode[c] !== 1);
    const i = Math.floor(k / table.nTorque);
    const j = k % table.nTorque;
    const x = findCell((c) => table.cells.feasible[c] === 0);
    const xi = Math.floor(x / table.nTorque);
    const xj = x % table.nTorque;
    writeFileSync(path.join(work, 'test_axle_table.h'), header);
    const fields = CELL_FLOAT_FIELDS.map((f) => `(double)test_axle_${f.replace(/[A-Z]/g, (ch) => `_${ch.toLowerCase()}`)}[${i}][${j}]`);
    const program = [
      '#include <stdio.h>',
      '#include "test_axle_table.h"',
      'int main(void) {',
      '  printf("%d %d %d\\n", TEST_AXLE_N_SPEED, TEST_AXLE_N_TORQUE, (int)TEST_AXLE_MODE_LOCKED);',
      `  printf("%d %d\\n", (int)test_axle_feasible[${i}][${j}], (int)test_axle_mode[${i}][${j}]);`,
      `  printf("${fields.map(() => '%.17g').join(' ')}\\n", ${fields.join(', ')});`,
      `  printf("%.17g %.17g %.17g %.17g\\n", (double)test_axle_speed_rpm[${i}], (double)test_axle_torque_nm[${j}], (double)test_axle_max_motoring_wheel_nm[${i}], (double)test_axle_max_braking_wheel_nm[${i}]);`,
      `  printf("%d %.17g %.17g\\n", (int)test_axle_feasible[${xi}][${xj}], (double)test_axle_battery_w[${xi}][${xj}], (double)TEST_AXLE_NO_VALUE);`,
      '  return 0;',
      '}',
      '',
    ].join('\n');
    writeFileSync(path.join(work, 'main.c'), program);
    const exe = path.join(work, 'main');
    const cc = spawnSync('gcc', ['-std=c99', '-Wall', '-Wextra', '-Werror', '-pedantic', '-o', exe, path.join(work, 'main.c')], {
      encoding: 'utf8',
    });
    expect(cc.stderr).toBe('');
    expect(cc.status).toBe(0);
    const run = spawnSync(exe, [], { encoding: 'utf8' });
    expect(run.status).toBe(0);
    const out = run.stdout.trim().split('\n').map((l) => l.split(' ').map(Number));
    expect(out[0]).toEqual([table.nSpeed, table.nTorque, 4]);
    expect(out[1]).toEqual([1, table.cells.mode[k]]);
    // Each printed float equals the table value rounded to binary32.
    CELL_FLOAT_FIELDS.forEach((f, n) => expect(out[2]![n]).toBe(Math.fround(table.cells[f][k]!)));
    expect(out[3]).toEqual([
      Math.fround(table.speedRpm[i]!),
      Math.fround(table.torqueNm[j]!),
      Math.fround(table.envelope.maxMotoringWheelNm[i]!),
      Math.fround(table.envelope.maxBrakingWheelNm[i]!),
    ]);
    expect(out[4]).toEqual([0, Math.fround(-1e30), Math.fround(-1e30)]);
  });
});

describe('table JSON', () => {
  const json = JSON.parse(JSON.stringify(tableToJson(table)));

  it('holds axes, envelope, column arrays [speed][torque], hash, parameters, smoothness and the caution', () => {
    expect(json.kind).toBe('lookup-table');
    expect(json.hash).toBe('sha256:0f3a9c');
    expect(json.generatedAt).toBe(table.generatedAt);
    expect(json.parameters.modeSwitchMarginW).toBe(250);
    expect(json.axes.speedRpm).toEqual(Array.from(table.speedRpm));
    expect(json.axes.torqueNm).toEqual(Array.from(table.torqueNm));
    expect(json.envelope.maxBrakingWheelNm).toEqual(Array.from(table.envelope.maxBrakingWheelNm));
    expect(json.smoothness).toEqual(table.smoothness);
    expect(json.caution).toMatch(/certifies nothing/);
    for (let i = 0; i < table.nSpeed; i++) {
      for (let j = 0; j < table.nTorque; j++) {
        const k = i * table.nTorque + j;
        expect(json.cells.feasible[i][j]).toBe(table.cells.feasible[k] === 1);
        expect(json.cells.mode[i][j]).toBe(modeFromCode(table.cells.mode[k]!));
        for (const f of CELL_FLOAT_FIELDS) {
          const v = table.cells[f][k]!;
          expect(json.cells[f][i][j]).toBe(Number.isNaN(v) ? null : v);
        }
      }
    }
  });
});
