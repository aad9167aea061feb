/**
 * The response body of a lookup table in one of its formats: JSON text, CSV (tableCsv.ts) or a
 * C99 header (cHeader.ts). The same text whether rendered in process or on a worker thread.
 */
import type { LookupTable } from '../solver/tableResult.js';
import type { TableFormat } from '../solver/tableSpec.js';
import { tableToCHeader } from './cHeader.js';
import { tableToCsv } from './tableCsv.js';
import { tableToJson } from './tableJson.js';

export function tableBody(t: LookupTable, format: TableFormat): string {
  if (format === 'csv') return tableToCsv(t);
  if (format === 'c') return tableToCHeader(t);
  return JSON.stringify(tableToJson(t));
}
