import { readFile, rm } from 'node:fs/promises';
import { join } from 'node:path';

/** What a leftover `postmaster.pid` tells about the previous run. */
export type LockState =
  | { readonly kind: 'none' }
  | { readonly kind: 'stale'; readonly pid: number }
  | { readonly kind: 'orphan'; readonly pid: number }
  | { readonly kind: 'in-use'; readonly pid: number; readonly ownerPid: number };

/**
 * Reads the data folder's lock file. "stale": the process is gone (a crash or a
 * kill); "orphan": a server still runs but its parent died, so nobody will stop
 * it; "in-use": another live process (another start of the service) owns it.
 */
export async function inspectLock(dataDir: string): Promise<LockState> {
  let text: string;
  try {
    text = await readFile(join(dataDir, 'postmaster.pid'), 'utf8');
  } catch {
    return { kind: 'none' };
  }
  const pid = Number.parseInt(text.split('\n')[0] ?? '', 10);
  if (!Number.isInteger(pid) || pid <= 0 || !isAlive(pid) || !(await isPostgres(pid))) {
    return { kind: 'stale', pid: Number.isInteger(pid) ? pid : 0 };
  }
  const ownerPid = await parentOf(pid);
  if (ownerPid === null || ownerPid <= 1 || !isAlive(ownerPid) || !(await isNode(ownerPid))) {
    return { kind: 'orphan', pid };
  }
  return { kind: 'in-use', pid, ownerPid };
}

export const removeLock = (dataDir: string): Promise<void> => rm(join(dataDir, 'postmaster.pid'), { force: true });

export function isAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** Sends SIGINT (fast shutdown) and waits up to `timeoutMs` for the process to go. */
export async function stopProcess(pid: number, timeoutMs = 15_000): Promise<boolean> {
  try {
    process.kill(pid, 'SIGINT');
  } catch {
    return true;
  }
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (!isAlive(pid)) return true;
    await new Promise((r) => setTimeout(r, 50));
  }
  return !isAlive(pid);
}

async function procText(pid: number, file: string): Promise<string | null> {
  try {
    return await readFile(`/proc/${pid}/${file}`, 'utf8');
  } catch {
    return null;
  }
}

async function isPostgres(pid: number): Promise<boolean> {
  const cmd = await procText(pid, 'cmdline');
  // Without /proc (not Linux) trust the pid.
  return cmd === null ? true : /postgres/.test(cmd);
}

async function isNode(pid: number): Promise<boolean> {
  const cmd = await procText(pid, 'cmdline');
  return cmd === null ? true : /node/.test(cmd);
}

async function parentOf(pid: number): Promise<number | null> {
  const status = await procText(pid, 'status');
  const match = status?.match(/^PPid:\s+(\d+)/m);
  return match?.[1] ? Number(match[1]) : null;
}
