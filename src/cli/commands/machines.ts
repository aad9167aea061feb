/** `episplit machines`: the machine maps with their limits and peak efficiency. */
import type { Command } from 'commander';
import { machineListItem, type MachineListItem } from '../../store/registry.js';
import { callServer, openRegistry } from '../context.js';
import { addSourceOptions, sourceOf } from '../options.js';
import { writeStdout } from '../output.js';
import { fixed, textTable } from '../textTable.js';

interface MachinesOptions {
  maps: string;
  data: string;
  url?: string;
  json?: boolean;
}

async function fromServer(url: string): Promise<MachineListItem[]> {
  return ((await (await callServer(url, 'GET', '/v1/machines')).json()) as { machines: MachineListItem[] }).machines;
}

async function fromFolders(opts: MachinesOptions): Promise<MachineListItem[]> {
  return (await openRegistry(sourceOf(opts))).listMachines().map(machineListItem);
}

export function machinesText(list: readonly MachineListItem[]): string {
  if (list.length === 0) return 'no machine maps found\n';
  return textTable(
    ['name', 'kind', 'origin', 'max torque N·m', 'max power kW', 'speed limit rpm', 'peak eff. motoring %', 'peak eff. generating %'],
    list.map((m) => [
      m.name,
      m.kind,
      m.origin,
      fixed(m.maxTorqueNm, 1),
      fixed(m.maxPowerW / 1000, 1),
      fixed(m.maxSpeedRpm, 0),
      fixed(m.peakEfficiency.motoring ? 100 * m.peakEfficiency.motoring.efficiency : null, 1),
      fixed(m.peakEfficiency.generating ? 100 * m.peakEfficiency.generating.efficiency : null, 1),
    ]),
  );
}

export function registerMachines(program: Command): void {
  const cmd = program
    .command('machines')
    .description('List machine maps: kind, largest torque (N·m), largest motoring power (kW), speed limit (rpm), peak efficiency (%)')
    .option('--json', 'print JSON { machines: [...] } (torque N·m, power W, speed rpm, efficiency 0..1)');
  addSourceOptions(cmd, true).action(async (opts: MachinesOptions) => {
    const list = opts.url !== undefined ? await fromServer(opts.url) : await fromFolders(opts);
    await writeStdout(opts.json ? JSON.stringify({ machines: list }, null, 2) + '\n' : machinesText(list));
  });
}
