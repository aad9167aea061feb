/** The short caution that every generated table carries (DESIGN.md §11). */
export const TABLE_CAUTION =
  'This table informs design and calibration; it certifies nothing. ' +
  "Validate it on a test bench under the maker's safety process before any vehicle use. " +
  'Torque, speed and thermal limits of real hardware come from its supplier. ' +
  'High-voltage work follows local codes and qualified practice.';
