import { SIZE_NAMES, SIZES, type SeedSize, type SizeName } from './sizes';

export interface CliOptions {
  readonly sizeName: SizeName;
  readonly size: SeedSize;
  readonly seed: number;
  readonly asOf: Date;
  readonly dataDir: string;
  readonly out: string;
  readonly reset: boolean;
  readonly verify: boolean;
}

export const USAGE = `npm run bench:seed -- --size XS|S|M|L [--seed N] [--as-of YYYY-MM-DD] [--data-dir DIR] [--out FILE] [--reset] [--verify]

  --size      XS (tests), S = 1,000 vessels, M = 100,000 vessels and 1,000,000 calibrations, L = ten times M
  --seed      the same seed and as-of date give the same rows (default 1)
  --as-of     the day the history ends (default today, UTC)
  --data-dir  the embedded server's data folder (default ./.data/bench); DATABASE_URL selects an external server instead
  --out       where the credential key, sign-in password and sample pairs go (default ./.data/bench-seed.json)
  --reset     delete the embedded data folder first
  --verify    recompute the audit chain afterwards`;

export class UsageError extends Error {}

export function parseOptions(argv: readonly string[], today: Date): CliOptions {
  const values = new Map<string, string>();
  const flags = new Set<string>();
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i] as string;
    if (arg === '--reset' || arg === '--verify' || arg === '--help') {
      flags.add(arg.slice(2));
      continue;
    }
    const [name, inline] = arg.split('=', 2) as [string, string | undefined];
    if (!['--size', '--seed', '--as-of', '--data-dir', '--out'].includes(name)) throw new UsageError(`unknown option ${arg}`);
    const value = inline ?? argv[++i];
    if (value === undefined) throw new UsageError(`${name} needs a value`);
    values.set(name.slice(2), value);
  }
  if (flags.has('help')) throw new UsageError('');
  const sizeName = (values.get('size') ?? '').toUpperCase() as SizeName;
  if (!SIZE_NAMES.includes(sizeName)) throw new UsageError(`--size must be one of ${SIZE_NAMES.join(', ')}`);
  const seed = Number(values.get('seed') ?? '1');
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) throw new UsageError('--seed must be an integer from 0 to 4294967295');
  const asOfText = values.get('as-of') ?? today.toISOString().slice(0, 10);
  const asOf = new Date(`${asOfText}T00:00:00Z`);
  if (!/^\d{4}-\d{2}-\d{2}$/.test(asOfText) || Number.isNaN(asOf.getTime())) throw new UsageError('--as-of must be a date, YYYY-MM-DD');
  return {
    sizeName,
    size: SIZES[sizeName],
    seed,
    asOf,
    dataDir: values.get('data-dir') ?? './.data/bench',
    out: values.get('out') ?? './.data/bench-seed.json',
    reset: flags.has('reset'),
    verify: flags.has('verify'),
  };
}
