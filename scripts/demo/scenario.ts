/**
 * The demo scenario: a fictional municipal water authority with three labs.
 * Invented for demonstrations only; never used as check values in tests.
 */
export const DEMO_LABS = [
  { code: 'DW-CHEM', name: 'Drinking-water chemistry', timeZone: 'Europe/Berlin' },
  { code: 'WW-LAB', name: 'Wastewater laboratory', timeZone: 'Europe/Berlin' },
  { code: 'TEACH', name: 'Teaching laboratory', timeZone: 'Europe/Berlin', factorValidityDays: 180 },
] as const;

export type DemoLabCode = (typeof DEMO_LABS)[number]['code'];

export const DEMO_PEOPLE: readonly {
  email: string;
  displayName: string;
  registryRole?: 'administrator' | 'auditor';
  labs?: readonly { lab: DemoLabCode; role: 'manager' | 'analyst'; externalRef?: string }[];
}[] = [
  { email: 'rosa.lindqvist@waterworks.example', displayName: 'Rosa Lindqvist', registryRole: 'administrator' },
  { email: 'henrik.vos@waterworks.example', displayName: 'Henrik Vos', registryRole: 'auditor' },
  { email: 'amara.osei@waterworks.example', displayName: 'Amara Osei', labs: [{ lab: 'DW-CHEM', role: 'manager' }] },
  {
    email: 'tomasz.wrobel@waterworks.example',
    displayName: 'Tomasz Wróbel',
    labs: [{ lab: 'DW-CHEM', role: 'analyst', externalRef: 'DW-A-014' }],
  },
  {
    email: 'lena.hartmann@waterworks.example',
    displayName: 'Lena Hartmann',
    labs: [{ lab: 'DW-CHEM', role: 'analyst', externalRef: 'DW-A-022' }],
  },
  {
    email: 'yusuf.demir@waterworks.example',
    displayName: 'Yusuf Demir',
    labs: [{ lab: 'DW-CHEM', role: 'analyst', externalRef: 'DW-A-031' }],
  },
  { email: 'ingrid.solberg@waterworks.example', displayName: 'Ingrid Solberg', labs: [{ lab: 'WW-LAB', role: 'manager' }] },
  { email: 'pablo.reyes@waterworks.example', displayName: 'Pablo Reyes', labs: [{ lab: 'WW-LAB', role: 'analyst' }] },
  {
    email: 'mei.lin@waterworks.example',
    displayName: 'Mei Lin',
    labs: [
      { lab: 'WW-LAB', role: 'analyst' },
      { lab: 'TEACH', role: 'analyst' },
    ],
  },
  { email: 'daniel.brook@waterworks.example', displayName: 'Daniel Brook', labs: [{ lab: 'TEACH', role: 'manager' }] },
  { email: 'sophie.adler@waterworks.example', displayName: 'Sophie Adler', labs: [{ lab: 'TEACH', role: 'analyst' }] },
];

type VesselKind =
  | 'volumetric-flask'
  | 'one-mark-pipette'
  | 'graduated-pipette'
  | 'burette'
  | 'graduated-cylinder'
  | 'piston-pipette-fixed'
  | 'piston-pipette-variable';

export interface DemoVessel {
  lab: DemoLabCode;
  tag: string;
  kind: VesselKind;
  nominalMl: string;
  graduationMl?: string;
  accuracyClass: 'A' | 'AS' | 'B' | 'none';
  material: string;
  location: string;
  status?: 'in-service' | 'quarantined' | 'retired';
  notes?: string;
}

const PREFIX: Record<DemoLabCode, string> = { 'DW-CHEM': 'DW', 'WW-LAB': 'WW', TEACH: 'T' };

const flask = (lab: DemoLabCode, n: number, ml: string, location: string, status?: DemoVessel['status']): DemoVessel => ({
  lab,
  tag: `VF-${ml}-${String(n).padStart(3, '0')}`,
  kind: 'volumetric-flask',
  nominalMl: ml,
  accuracyClass: 'A',
  material: 'borosilicate-3-3',
  location,
  ...(status ? { status } : {}),
});
const pipette = (
  lab: DemoLabCode,
  n: number,
  ml: string,
  cls: 'A' | 'AS' | 'B',
  location: string,
  status?: DemoVessel['status'],
): DemoVessel => ({
  lab,
  tag: `PIP-${ml}-${String(n).padStart(3, '0')}`,
  kind: 'one-mark-pipette',
  nominalMl: ml,
  accuracyClass: cls,
  material: 'borosilicate-3-3',
  location,
  ...(status ? { status } : {}),
});

const LAB_VESSELS: readonly DemoVessel[] = [
  flask('DW-CHEM', 1, '50', 'Room 1.12, bench 2'),
  flask('DW-CHEM', 2, '100', 'Room 1.12, bench 2'),
  flask('DW-CHEM', 3, '100', 'Room 1.12, bench 3'),
  flask('DW-CHEM', 4, '250', 'Room 1.12, cabinet B'),
  flask('DW-CHEM', 5, '500', 'Room 1.12, cabinet B'),
  flask('DW-CHEM', 6, '1000', 'Room 1.14, ion chromatography'),
  flask('DW-CHEM', 7, '100', 'Room 1.14, ion chromatography'),
  pipette('DW-CHEM', 1, '5', 'AS', 'Room 1.12, bench 2'),
  pipette('DW-CHEM', 2, '10', 'AS', 'Room 1.12, bench 2'),
  pipette('DW-CHEM', 3, '20', 'A', 'Room 1.12, bench 3'),
  pipette('DW-CHEM', 4, '25', 'AS', 'Room 1.12, bench 3'),
  pipette('DW-CHEM', 5, '25', 'AS', 'Room 1.14, titration'),
  pipette('DW-CHEM', 6, '50', 'A', 'Room 1.14, titration'),
  {
    lab: 'DW-CHEM',
    tag: 'BUR-50-001',
    kind: 'burette',
    nominalMl: '50',
    graduationMl: '0.1',
    accuracyClass: 'A',
    material: 'borosilicate-3-3',
    location: 'Room 1.14, titration',
  },
  {
    lab: 'DW-CHEM',
    tag: 'BUR-25-002',
    kind: 'burette',
    nominalMl: '25',
    graduationMl: '0.05',
    accuracyClass: 'AS',
    material: 'borosilicate-3-3',
    location: 'Room 1.14, titration',
  },
  {
    lab: 'DW-CHEM',
    tag: 'GP-10-001',
    kind: 'graduated-pipette',
    nominalMl: '10',
    graduationMl: '0.1',
    accuracyClass: 'AS',
    material: 'borosilicate-3-3',
    location: 'Room 1.12, bench 2',
  },
  {
    lab: 'DW-CHEM',
    tag: 'PP-1000-001',
    kind: 'piston-pipette-variable',
    nominalMl: '1',
    accuracyClass: 'none',
    material: 'polypropylene',
    location: 'Room 1.12, bench 3',
  },
  {
    lab: 'DW-CHEM',
    tag: 'PP-200-002',
    kind: 'piston-pipette-fixed',
    nominalMl: '0.2',
    accuracyClass: 'none',
    material: 'polypropylene',
    location: 'Room 1.12, bench 3',
  },
  flask('WW-LAB', 1, '100', 'Hall 2, COD bench'),
  flask('WW-LAB', 2, '250', 'Hall 2, COD bench'),
  flask('WW-LAB', 3, '500', 'Hall 2, nutrients'),
  flask('WW-LAB', 4, '1000', 'Hall 2, nutrients'),
  flask('WW-LAB', 5, '200', 'Hall 2, nutrients'),
  pipette('WW-LAB', 1, '10', 'A', 'Hall 2, COD bench'),
  pipette('WW-LAB', 2, '20', 'A', 'Hall 2, COD bench'),
  pipette('WW-LAB', 3, '25', 'B', 'Hall 2, nutrients'),
  pipette('WW-LAB', 4, '50', 'A', 'Hall 2, nutrients', 'retired'),
  {
    lab: 'WW-LAB',
    tag: 'BUR-50-003',
    kind: 'burette',
    nominalMl: '50',
    graduationMl: '0.1',
    accuracyClass: 'B',
    material: 'borosilicate-3-3',
    location: 'Hall 2, COD bench',
  },
  {
    lab: 'WW-LAB',
    tag: 'CYL-500-001',
    kind: 'graduated-cylinder',
    nominalMl: '500',
    graduationMl: '5',
    accuracyClass: 'B',
    material: 'polypropylene',
    location: 'Hall 2, sampling',
  },
  {
    lab: 'WW-LAB',
    tag: 'CYL-100-002',
    kind: 'graduated-cylinder',
    nominalMl: '100',
    graduationMl: '1',
    accuracyClass: 'A',
    material: 'borosilicate-3-3',
    location: 'Hall 2, sampling',
  },
  {
    lab: 'WW-LAB',
    tag: 'PP-5000-003',
    kind: 'piston-pipette-variable',
    nominalMl: '5',
    accuracyClass: 'none',
    material: 'polypropylene',
    location: 'Hall 2, nutrients',
  },
  flask('TEACH', 1, '100', 'Teaching room, cupboard 1'),
  flask('TEACH', 2, '100', 'Teaching room, cupboard 1'),
  flask('TEACH', 3, '250', 'Teaching room, cupboard 1'),
  pipette('TEACH', 1, '10', 'B', 'Teaching room, cupboard 2'),
  pipette('TEACH', 2, '10', 'B', 'Teaching room, cupboard 2'),
  pipette('TEACH', 3, '25', 'B', 'Teaching room, cupboard 2'),
  {
    lab: 'TEACH',
    tag: 'BUR-50-004',
    kind: 'burette',
    nominalMl: '50',
    graduationMl: '0.1',
    accuracyClass: 'B',
    material: 'soda-lime',
    location: 'Teaching room, cupboard 3',
  },
  {
    lab: 'TEACH',
    tag: 'CYL-250-003',
    kind: 'graduated-cylinder',
    nominalMl: '250',
    graduationMl: '2',
    accuracyClass: 'B',
    material: 'soda-lime',
    location: 'Teaching room, cupboard 3',
  },
  {
    lab: 'TEACH',
    tag: 'GP-5-002',
    kind: 'graduated-pipette',
    nominalMl: '5',
    graduationMl: '0.05',
    accuracyClass: 'B',
    material: 'soda-lime',
    location: 'Teaching room, cupboard 2',
  },
];

/** Asset tags carry the lab's prefix, so each lab numbers its own glassware. */
export const DEMO_VESSELS: readonly DemoVessel[] = LAB_VESSELS.map((v) => ({ ...v, tag: `${PREFIX[v.lab]}-${v.tag}` }));

/**
 * Dates are relative to the day the demo is loaded, so due and overdue items stay realistic.
 * Minimum weights come from the USP <41> checks in the history.
 */
export const DEMO_BALANCES = [
  {
    lab: 'DW-CHEM',
    tag: 'BAL-01',
    model: 'analytical 220 g',
    capacityG: '220',
    readabilityG: '0.0001',
    location: 'Room 1.13, weighing table 1',
    calibratedDaysAgo: 120,
    dueInDays: 245,
  },
  {
    lab: 'DW-CHEM',
    tag: 'BAL-02',
    model: 'semi-micro 120 g',
    capacityG: '120',
    readabilityG: '0.00001',
    location: 'Room 1.13, weighing table 2',
    calibratedDaysAgo: 340,
    dueInDays: 25,
  },
  {
    lab: 'WW-LAB',
    tag: 'BAL-03',
    model: 'precision 320 g',
    capacityG: '320',
    readabilityG: '0.001',
    location: 'Hall 2, weighing corner',
    calibratedDaysAgo: 200,
    dueInDays: 165,
  },
  {
    lab: 'TEACH',
    tag: 'BAL-04',
    model: 'top-loading 2200 g',
    capacityG: '2200',
    readabilityG: '0.01',
    location: 'Teaching room, side bench',
    calibratedDaysAgo: 400,
    dueInDays: -35,
  },
] as const;

export const DEMO_WEIGHTS = [
  {
    lab: 'DW-CHEM',
    tag: 'CW-E2-001',
    nominalMassG: '1',
    oimlClass: 'E2',
    conventionalMassG: '1.000012',
    uncertaintyG: '0.000016',
    dueInDays: 180,
  },
  {
    lab: 'DW-CHEM',
    tag: 'CW-E2-010',
    nominalMassG: '10',
    oimlClass: 'E2',
    conventionalMassG: '10.000021',
    uncertaintyG: '0.000025',
    dueInDays: 180,
  },
  {
    lab: 'DW-CHEM',
    tag: 'CW-E2-050',
    nominalMassG: '50',
    oimlClass: 'E2',
    conventionalMassG: '49.999968',
    uncertaintyG: '0.000040',
    dueInDays: 180,
  },
  {
    lab: 'DW-CHEM',
    tag: 'CW-E2-100',
    nominalMassG: '100',
    oimlClass: 'E2',
    conventionalMassG: '100.000045',
    uncertaintyG: '0.000050',
    dueInDays: 180,
  },
  {
    lab: 'DW-CHEM',
    tag: 'CW-E2-200',
    nominalMassG: '200',
    oimlClass: 'E2',
    conventionalMassG: '200.000090',
    uncertaintyG: '0.000100',
    dueInDays: 180,
  },
  {
    lab: 'WW-LAB',
    tag: 'CW-F1-100',
    nominalMassG: '100',
    oimlClass: 'F1',
    conventionalMassG: '100.00031',
    uncertaintyG: '0.00016',
    dueInDays: 60,
  },
  {
    lab: 'WW-LAB',
    tag: 'CW-F1-200',
    nominalMassG: '200',
    oimlClass: 'F1',
    conventionalMassG: '199.99952',
    uncertaintyG: '0.00030',
    dueInDays: 60,
  },
  {
    lab: 'TEACH',
    tag: 'CW-M1-2000',
    nominalMassG: '2000',
    oimlClass: 'M1',
    conventionalMassG: '2000.021',
    uncertaintyG: '0.033',
    dueInDays: -10,
  },
] as const;

export const DEMO_INSTRUMENTS = [
  { lab: 'DW-CHEM', tag: 'TH-01', kind: 'thermometer', temperatureUncertaintyK: '0.05', dueInDays: 200, location: 'Room 1.13' },
  {
    lab: 'DW-CHEM',
    tag: 'THY-01',
    kind: 'thermohygrometer',
    temperatureUncertaintyK: '0.3',
    humidityUncertaintyPercent: '2.5',
    dueInDays: 90,
    location: 'Room 1.13',
  },
  { lab: 'DW-CHEM', tag: 'BARO-01', kind: 'barometer', pressureUncertaintyPa: '30', dueInDays: 300, location: 'Room 1.13' },
  { lab: 'WW-LAB', tag: 'TH-02', kind: 'thermometer', temperatureUncertaintyK: '0.1', dueInDays: 14, location: 'Hall 2' },
  {
    lab: 'WW-LAB',
    tag: 'THY-02',
    kind: 'thermohygrometer',
    temperatureUncertaintyK: '0.3',
    humidityUncertaintyPercent: '3',
    dueInDays: 150,
    location: 'Hall 2',
  },
  { lab: 'TEACH', tag: 'TH-03', kind: 'thermometer', temperatureUncertaintyK: '0.2', dueInDays: -20, location: 'Teaching room' },
] as const;
