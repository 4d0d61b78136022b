import type { SeedSize } from './sizes';
import { BALANCE_MODELS, type BalanceClass, FIRST_NAMES, LAB_BALANCES, LAST_NAMES, REFERENCE_MASSES_G, labIdentity } from './catalogue';
import type { SeededRandom } from './random';

/*
 * The registry's people and items, held in memory while the history is generated (a few
 * thousand rows even at size L, except vessels, which are generated batch by batch).
 */

export const DAY_MS = 86_400_000;

export interface Lab {
  readonly id: string;
  readonly code: string;
  readonly name: string;
  readonly createdAt: Date;
  /** Members who perform calibrations (analysts and managers). */
  readonly members: Person[];
  readonly managers: Person[];
  readonly balances: Balance[];
  readonly weights: Weight[];
  readonly thermometers: Instrument[];
  readonly instruments: Instrument[];
}

export interface Person {
  readonly id: string;
  readonly email: string;
  readonly displayName: string;
  readonly registryRole: 'administrator' | 'auditor' | null;
  readonly signsIn: boolean;
  readonly status: 'active' | 'disabled';
  readonly createdAt: Date;
  readonly memberships: { readonly labId: string; readonly role: 'manager' | 'analyst'; readonly externalRef: string | null }[];
}

export interface Balance {
  readonly id: string;
  readonly labId: string;
  readonly assetTag: string;
  readonly balanceClass: BalanceClass;
  readonly serial: string;
  readonly location: string;
  readonly externalDate: string;
  readonly externalDue: string;
  readonly certificate: string;
  /** Ends with a failed check and a quarantine. */
  readonly failsAtEnd: boolean;
  /** Check instants, ascending; filled by the check plan. */
  checkTimes: number[];
  status: 'in-service' | 'quarantined';
  minimumWeightG: string | null;
  minimumWeightAt: Date | null;
}

export interface Weight {
  readonly id: string;
  readonly labId: string;
  readonly assetTag: string;
  readonly nominalG: number;
  readonly oimlClass: 'E2' | 'F1';
  readonly conventionalMassG: string;
  readonly uncertaintyG: string;
  readonly certificate: string;
  readonly certificateDue: string;
}

export interface Instrument {
  readonly id: string;
  readonly labId: string;
  readonly assetTag: string;
  readonly kind: 'thermometer' | 'barometer' | 'thermohygrometer';
  readonly calibrationDate: string;
  readonly calibrationDue: string;
  readonly certificate: string;
}

export interface World {
  readonly asOf: Date;
  readonly historyStart: Date;
  readonly admin: Person;
  readonly auditor: Person;
  readonly labs: Lab[];
  readonly people: Person[];
}

const isoDate = (ms: number) => new Date(ms).toISOString().slice(0, 10);
const pad = (n: number, width: number) => String(n).padStart(width, '0');

export function buildWorld(size: SeedSize, asOf: Date, rnd: SeededRandom): World {
  const historyStart = new Date(asOf.getTime() - Math.round(size.historyYears * 365.25) * DAY_MS);
  const founded = new Date(historyStart.getTime() - 60 * DAY_MS);
  const ids = rnd.fork('ids');
  const r = rnd.fork('world');

  const labs: Lab[] = Array.from({ length: size.labs }, (_, i) => ({
    id: ids.uuid(),
    ...labIdentity(i),
    createdAt: new Date(founded.getTime() + i * 3_600_000),
    members: [],
    managers: [],
    balances: [],
    weights: [],
    thermometers: [],
    instruments: [],
  }));

  const usedEmails = new Set<string>();
  const person = (first: string, last: string, role: Person['registryRole'], signsIn: boolean): Person => {
    const baseEmail = `${first}.${last}`.toLowerCase();
    let email = `${baseEmail}@waterworks.example`;
    for (let n = 2; usedEmails.has(email); n++) email = `${baseEmail}${n}@waterworks.example`;
    usedEmails.add(email);
    return {
      id: ids.uuid(),
      email,
      displayName: `${first} ${last}`,
      registryRole: role,
      signsIn,
      status: 'active',
      createdAt: new Date(founded.getTime() + r.int(0, 30) * DAY_MS),
      memberships: [],
    };
  };
  const admin = person('Registry', 'Admin', 'administrator', true);
  const auditor = person('Quality', 'Auditor', 'auditor', true);

  const people: Person[] = [admin, auditor];
  for (let i = 0; i < size.people; i++) {
    const lab = labs[i % labs.length] as Lab;
    const rank = Math.floor(i / labs.length);
    const manager = rank < 2;
    const p = person(r.pick(FIRST_NAMES), r.pick(LAST_NAMES), null, manager);
    const disabled = !manager && r.chance(0.02);
    const entry: Person = disabled ? { ...p, status: 'disabled' } : p;
    entry.memberships.push({ labId: lab.id, role: manager ? 'manager' : 'analyst', externalRef: `${lab.code}-A-${pad(rank + 1, 4)}` });
    lab.members.push(entry);
    if (manager) lab.managers.push(entry);
    // Some analysts also work in a second lab.
    if (!manager && labs.length > 1 && r.chance(0.1)) {
      const other = labs[(i + 1 + r.int(0, labs.length - 2)) % labs.length] as Lab;
      if (other !== lab) {
        entry.memberships.push({ labId: other.id, role: 'analyst', externalRef: null });
        other.members.push(entry);
      }
    }
    people.push(entry);
  }

  const asOfMs = asOf.getTime();
  for (const lab of labs) {
    const classes = Array.from({ length: size.balancesPerLab }, (_, i) => LAB_BALANCES[i % LAB_BALANCES.length] as BalanceClass);
    classes.forEach((balanceClass, i) => {
      const externalDate = asOfMs - r.int(20, 330) * DAY_MS;
      lab.balances.push({
        id: ids.uuid(),
        labId: lab.id,
        assetTag: `${lab.code}-BAL-${pad(i + 1, 2)}`,
        balanceClass,
        serial: `SN${r.int(1_000_000, 9_999_999)}`,
        location: `Room ${r.int(1, 3)}.${pad(r.int(1, 20), 2)}, weighing table ${r.int(1, 4)}`,
        externalDate: isoDate(externalDate),
        externalDue: isoDate(externalDate + 365 * DAY_MS),
        certificate: `DKD-${r.int(10_000, 99_999)}`,
        failsAtEnd: i > 0 && r.chance(0.04),
        checkTimes: [],
        status: 'in-service',
        minimumWeightG: null,
        minimumWeightAt: null,
      });
    });
    for (const nominalG of REFERENCE_MASSES_G) {
      const e2 = nominalG <= 200;
      const deviationG = (r.normal(0, 0.15) * nominalG) / 100_000;
      const certDate = asOfMs - r.int(20, 300) * DAY_MS;
      lab.weights.push({
        id: ids.uuid(),
        labId: lab.id,
        assetTag: `${lab.code}-W-${nominalG}G`,
        nominalG,
        oimlClass: e2 ? 'E2' : 'F1',
        conventionalMassG: (nominalG + deviationG).toFixed(e2 ? 6 : 5),
        uncertaintyG: ((e2 ? 0.00005 : 0.0002) * Math.max(1, nominalG / 20)).toFixed(6),
        certificate: `W-${r.int(10_000, 99_999)}`,
        certificateDue: isoDate(certDate + 730 * DAY_MS),
      });
    }
    const instrument = (kind: Instrument['kind'], n: number): Instrument => {
      const calibrated = asOfMs - r.int(20, 300) * DAY_MS;
      const tag = { thermometer: 'TH', barometer: 'BARO', thermohygrometer: 'THH' }[kind];
      return {
        id: ids.uuid(),
        labId: lab.id,
        assetTag: `${lab.code}-${tag}-${pad(n, 2)}`,
        kind,
        calibrationDate: isoDate(calibrated),
        calibrationDue: isoDate(calibrated + 365 * DAY_MS),
        certificate: `T-${r.int(10_000, 99_999)}`,
      };
    };
    for (let n = 1; n <= 3; n++) lab.thermometers.push(instrument('thermometer', n));
    lab.instruments.push(...lab.thermometers, instrument('barometer', 1), instrument('thermohygrometer', 1));
  }
  return { asOf, historyStart, admin, auditor, labs, people };
}

/** Working days (Monday to Friday) from the start of the history to the day before as-of, as UTC midnights. */
export function workingDays(world: World): number[] {
  const days: number[] = [];
  for (let t = world.historyStart.getTime(); t < world.asOf.getTime(); t += DAY_MS) {
    const wd = new Date(t).getUTCDay();
    if (wd !== 0 && wd !== 6) days.push(t);
  }
  return days;
}

/** The check weight of a balance class in a lab. */
export function weightOf(lab: Lab, nominalG: number): Weight {
  const w = lab.weights.find((x) => x.nominalG === nominalG);
  if (!w) throw new Error(`lab ${lab.code} has no ${nominalG} g weight`);
  return w;
}

export const balanceModel = (b: Balance) => BALANCE_MODELS[b.balanceClass];
