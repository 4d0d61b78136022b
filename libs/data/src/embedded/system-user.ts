import { execFile } from 'node:child_process';
import { userInfo } from 'node:os';
import { promisify } from 'node:util';

const run = promisify(execFile);

/** The unprivileged account the server runs as when we are root. */
export interface ServerAccount {
  readonly uid: number;
  readonly gid: number;
  readonly name: string;
}

export const isRoot = (): boolean => userInfo().uid === 0;

/**
 * PostgreSQL refuses to run as root. As root, return (creating it once if
 * needed) an unprivileged system account for the server; otherwise null, and
 * the server runs as the current user.
 */
export async function serverAccount(name = 'postgres'): Promise<ServerAccount | null> {
  if (!isRoot()) return null;
  const found = await lookup(name);
  if (found) return found;
  await run('useradd', ['--system', '--user-group', '--no-create-home', '--shell', '/usr/sbin/nologin', name]).catch((err: Error) => {
    throw new Error(`Running as root, and the system user "${name}" could not be created: ${err.message}`);
  });
  const created = await lookup(name);
  if (!created) throw new Error(`Running as root, and the system user "${name}" is still missing after useradd.`);
  return created;
}

async function lookup(name: string): Promise<ServerAccount | null> {
  try {
    const [uid, gid] = await Promise.all([run('id', ['-u', name]), run('id', ['-g', name])]);
    return { uid: Number(uid.stdout.trim()), gid: Number(gid.stdout.trim()), name };
  } catch {
    return null;
  }
}
