import { readFileSync } from 'node:fs';

/** User + system CPU time a process has used, ms (from /proc, clock ticks of 10 ms). */
export function cpuMs(pid: number): number {
  const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ');
  return (Number(fields[11]) + Number(fields[12])) * 10;
}
