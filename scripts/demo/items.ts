import type { PrismaClient } from '@registry/data';

import type { PlannableVessel } from './plan';
import { ANALYSTS } from './plan';
import { type BalanceInUse, fitsOn, type VesselUnderTest } from './readings';
import type { DemoLabCode } from './scenario';

export interface DemoBalance extends BalanceInUse {
  readonly tag: string;
  readonly lab: DemoLabCode;
}
export interface DemoVesselRecord extends VesselUnderTest {
  readonly tag: string;
  readonly lab: DemoLabCode;
  readonly status: string;
}

/** What the history needs to know about the loaded items, read back from the registry. */
export interface DemoItems {
  readonly people: ReadonlyMap<string, string>;
  readonly plannable: readonly PlannableVessel[];
  labId(code: DemoLabCode): string;
  vessel(tag: string): DemoVesselRecord;
  balance(tag: string): DemoBalance;
  /** The balance a vessel is weighed on: the smallest one it fits on with room to spare, else the largest it fits on. */
  balanceFor(vesselTag: string): DemoBalance;
  weight(tag: string): { id: string; conventionalMassG: string };
  thermometerOf(lab: DemoLabCode): { id: string };
  analysts(lab: DemoLabCode): readonly string[];
}

export async function loadItems(prisma: PrismaClient): Promise<DemoItems> {
  const labs = await prisma.lab.findMany({ select: { id: true, code: true } });
  const labCode = new Map(labs.map((l) => [l.id, l.code as DemoLabCode]));
  const lab = (id: string) => labCode.get(id) as DemoLabCode;
  const people = new Map((await prisma.person.findMany({ select: { id: true, email: true } })).map((p) => [p.email, p.id]));
  const balances: DemoBalance[] = (await prisma.balance.findMany()).map((b) => ({
    id: b.id,
    tag: b.assetTag,
    lab: lab(b.labId),
    capacityG: b.capacityG.toString(),
    readabilityG: b.readabilityG.toString(),
  }));
  const vessels: DemoVesselRecord[] = (await prisma.vessel.findMany({ orderBy: { assetTag: 'asc' } })).map((v) => ({
    id: v.id,
    tag: v.assetTag,
    lab: lab(v.labId),
    kind: v.kind,
    nominalMl: v.nominalVolumeMl.toString(),
    material: v.material ?? '',
    deliveryMode: v.deliveryMode as 'contain' | 'deliver',
    limitMl: v.limitMl === null ? null : v.limitMl.toString(),
    status: v.status,
  }));
  const weights = new Map(
    (await prisma.referenceWeight.findMany()).map((w) => [
      w.assetTag,
      { id: w.id, conventionalMassG: (w.conventionalMassG ?? w.nominalMassG).toString() },
    ]),
  );
  const thermometers = await prisma.instrument.findMany({ where: { kind: 'thermometer' } });

  const balanceFor = (v: DemoVesselRecord): DemoBalance | null => {
    const fitting = balances.filter((b) => b.lab === v.lab && fitsOn(v, b)).sort((a, b) => Number(a.capacityG) - Number(b.capacityG));
    return fitting.find((b) => Number(v.nominalMl) <= Number(b.capacityG) / 10) ?? fitting.at(-1) ?? null;
  };
  const find = <T>(value: T | undefined, what: string): T => {
    if (value === undefined) throw new Error(`demo data: no ${what}`);
    return value;
  };
  return {
    people,
    // Vessels in service that one of their lab's balances can weigh full; the larger flasks go out for calibration.
    plannable: vessels.filter((v) => v.status === 'in-service' && balanceFor(v) !== null),
    labId: (code) => find(labs.find((l) => l.code === code)?.id, `lab ${code}`),
    vessel: (tag) =>
      find(
        vessels.find((v) => v.tag === tag),
        `vessel ${tag}`,
      ),
    balance: (tag) =>
      find(
        balances.find((b) => b.tag === tag),
        `balance ${tag}`,
      ),
    balanceFor: (tag) =>
      find(
        balanceFor(
          find(
            vessels.find((v) => v.tag === tag),
            `vessel ${tag}`,
          ),
        ) ?? undefined,
        `balance for ${tag}`,
      ),
    weight: (tag) => find(weights.get(tag), `weight ${tag}`),
    thermometerOf: (code) =>
      find(
        thermometers.find((t) => lab(t.labId) === code),
        `thermometer of ${code}`,
      ),
    analysts: (code) => ANALYSTS[code],
  };
}
