/**
 * Tooth-count rules for a simple planetary gear set with N equally spaced planets (gear design
 * handbooks, e.g. the assembly and adjacency conditions for epicyclic sets):
 *   planet teeth Zp = (Zr − Zs)/2 must be a whole number (coaxial centre distances, same module);
 *   assembly: (Zs + Zr)/N must be a whole number;
 *   adjacency: (Zs + Zp)·sin(π/N) > Zp + 2 (tip circles of neighbouring planets must not touch).
 */
import { ModelError, joinPath } from '../problem.js';

export interface GearsetGeometry {
  sunTeeth: number;
  ringTeeth: number;
  planetTeeth: number;
  planets: number;
  /** k = Zr/Zs (stationary ratio −k). */
  k: number;
}

function fail(message: string, path: string): never {
  throw new ModelError('gearset-invalid', message, path);
}

/**
 * Checks tooth counts (whole numbers) and planet count; returns the derived geometry.
 * `base` is the field path of the gear-set object (default `gearset`).
 */
export function checkGeometry(sunTeeth: number, ringTeeth: number, planets: number, base = 'gearset'): GearsetGeometry {
  const p = (key: string) => joinPath(base, key);
  if (!Number.isInteger(sunTeeth) || sunTeeth < 1) fail(`sun teeth must be a whole number >= 1 (got ${sunTeeth})`, p('sunTeeth'));
  if (!Number.isInteger(ringTeeth) || ringTeeth < 1) fail(`ring teeth must be a whole number >= 1 (got ${ringTeeth})`, p('ringTeeth'));
  if (!Number.isInteger(planets) || planets < 2) fail(`planets must be a whole number >= 2 (got ${planets})`, p('planets'));
  if (ringTeeth <= sunTeeth) fail(`ring teeth (${ringTeeth}) must exceed sun teeth (${sunTeeth})`, p('ringTeeth'));
  const diff = ringTeeth - sunTeeth;
  if (diff % 2 !== 0) {
    fail(`planet teeth (Zr − Zs)/2 = ${diff / 2} is not a whole number; ring and sun teeth must differ by an even number`, p('ringTeeth'));
  }
  const planetTeeth = diff / 2;
  const sum = sunTeeth + ringTeeth;
  if (sum % planets !== 0) {
    fail(`assembly condition fails: (Zs + Zr)/N = ${sum}/${planets} is not a whole number`, p('planets'));
  }
  const reach = (sunTeeth + planetTeeth) * Math.sin(Math.PI / planets);
  if (!(reach > planetTeeth + 2)) {
    fail(
      `adjacency condition fails: (Zs + Zp)·sin(π/N) = ${reach.toFixed(3)} must exceed Zp + 2 = ${planetTeeth + 2}; neighbouring planets would touch`,
      p('planets'),
    );
  }
  return { sunTeeth, ringTeeth, planetTeeth, planets, k: ringTeeth / sunTeeth };
}
