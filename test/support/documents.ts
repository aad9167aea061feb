/** Small invented documents shared by the HTTP tests. */

/** A 3 × 3 loss grid map (invented numbers). */
export const SMALL_GRID = {
  kind: 'grid',
  description: 'test map',
  speedRpm: [0, 2000, 4000],
  torqueNm: [-50, 0, 50],
  lossW: [
    [100, 50, 100],
    [300, 150, 300],
    [600, 400, 600],
  ],
  maxTorqueNm: [50, 50, 30],
  minTorqueNm: [-50, -50, -30],
  maxSpeedRpm: 4000,
};
