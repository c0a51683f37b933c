/**
 * Scenario fields of operating realism (issue 9; README "Operating realism"): per-station
 * handling (`handling.groups`, `handling.stations`), the battery (`fleet.battery`) and
 * breakdowns (`faults.breakdowns`). Every bad value is one InputError line naming the field
 * and what was expected; good values normalize to the units the engine uses (seconds).
 */
import { describe, expect, it } from 'vitest';
import { InputError } from '../sim/errors.ts';
import { parseScenarioText } from '../scenarios/load.ts';

// 9 x 5 hall: pickup 1:1, drops 7:1 and 7:2, parking 1:2 and 1:3, charger 3:3.
const hall = ['#########', '#P.....D#', '#H.....D#', '#H.C....#', '#########'];
const noCharger = ['#########', '#P.....D#', '#H.....D#', '#H......#', '#########'];

function yaml(parts: { handling?: string; fleet?: string; faults?: string; layout?: string[]; demand?: string }): string {
  const layout = (parts.layout ?? hall).map((row) => `  ${row}`).join('\n');
  return [
    'name: t',
    `layout: |\n${layout}`,
    `handling: ${parts.handling ?? '{ pickupSeconds: 4, dropSeconds: 2 }'}`,
    `fleet: ${parts.fleet ?? '{ robots: 2 }'}`,
    `demand: ${parts.demand ?? '{ kind: saturated }'}`,
    ...(parts.faults ? [`faults: ${parts.faults}`] : []),
    '',
  ].join('\n');
}

function messageOf(text: string): string {
  try {
    parseScenarioText(text, 'hall.yaml');
  } catch (error) {
    expect(error).toBeInstanceOf(InputError);
    return (error as Error).message;
  }
  throw new Error('no error');
}

const bad: [string, Parameters<typeof yaml>[0], RegExp][] = [
  // Per-station handling (handling is line 8, fleet 9, faults 11)
  ['station key that is neither a cell nor a group', { handling: "{ stations: { north: { pickupSeconds: 6 } } }" }, /^hall\.yaml: handling\.stations\.north \(line 8\): got "north", expected a station cell "x:y" or a group named in handling\.groups$/],
  ['station key on plain floor', { handling: "{ stations: { '3:1': { pickupSeconds: 6 } } }" }, /handling\.stations\.3:1 \(line 8\): got "3:1", expected a station cell \(P or D in delivery mode\), not floor 3:1/],
  ['station key outside the grid', { handling: "{ stations: { '30:1': { pickupSeconds: 6 } } }" }, /handling\.stations\.30:1 \(line 8\): got "30:1", expected a station cell written x:y inside the 9x5 grid/],
  ['dropSeconds on a pickup point', { handling: "{ stations: { '1:1': { dropSeconds: 6 } } }" }, /handling\.stations\.1:1\.dropSeconds \(line 8\): got a dropSeconds for "1:1", expected it only for drop points \(D\) in delivery mode/],
  ['pickupSeconds on a group of drops', { handling: "{ groups: { chutes: ['7:1', '7:2'] }, stations: { chutes: { pickupSeconds: 3 } } }" }, /handling\.stations\.chutes\.pickupSeconds \(line 8\): .*expected it only for pickup points \(P\) in delivery mode \(group "chutes" has none\)/],
  ['station override without a field', { handling: "{ stations: { '1:1': {} } }" }, /handling\.stations\.1:1 \(line 8\): got the mapping \{\}, expected a mapping with pickupSeconds or dropSeconds/],
  ['negative station handling', { handling: "{ stations: { '1:1': { pickupSeconds: -1 } } }" }, /handling\.stations\.1:1\.pickupSeconds \(line 8\): got -1, expected a number of seconds >= 0/],
  ['station handling with an unknown distribution', { handling: "{ stations: { '7:1': { dropSeconds: { dist: normal, mean: 3 } } } }" }, /handling\.stations\.7:1\.dropSeconds\.dist \(line 8\): got "normal", expected dist: fixed, uniform or exponential/],
  ['unknown key in a station override', { handling: "{ stations: { '7:1': { tipSeconds: 3 } } }" }, /handling\.stations\.7:1\.tipSeconds \(line 8\): got unknown key "tipSeconds", expected one of pickupSeconds, dropSeconds/],
  ['group name with a colon', { handling: "{ groups: { 'a:b': ['1:1'] } }" }, /handling\.groups\.a:b \(line 8\): got the group name "a:b", expected a name without ":"/],
  ['empty group', { handling: '{ groups: { west: [] } }' }, /handling\.groups\.west \(line 8\): got an empty list, expected at least one station cell/],
  ['group listing a cell twice', { handling: "{ groups: { chutes: ['7:1', '7:1'] } }" }, /handling\.groups\.chutes\[1\] \(line 8\): got "7:1" twice, expected each cell once/],
  ['group member that is a charger', { handling: "{ groups: { chutes: ['7:1', '3:3'] } }" }, /handling\.groups\.chutes\[1\] \(line 8\): got "3:3", expected a station cell \(P or D in delivery mode\), not charger 3:3/],
  ['group that is not a list', { handling: '{ groups: { chutes: 7 } }' }, /handling\.groups\.chutes \(line 8\): got 7, expected a list of station cells "x:y"/],
  ['two groups giving one cell the same field', { handling: "{ groups: { a: ['7:1'], b: ['7:1', '7:2'] }, stations: { a: { dropSeconds: 1 }, b: { dropSeconds: 2 } } }" }, /handling\.stations\.b\.dropSeconds \(line 8\): got a second dropSeconds for 7:1 \(also in group "a"\), expected each cell in at most one group/],
  ['storage point as a station in delivery mode', { layout: ['#########', '#P....SD#', '#H.....D#', '#H.C....#', '#########'], handling: "{ stations: { '6:1': { pickupSeconds: 2 } } }" }, /handling\.stations\.6:1 \(line 8\): got "6:1", expected a station cell \(P or D in delivery mode\), not storage 6:1/],
  // Battery
  ['battery without a charger in the layout', { layout: noCharger, fleet: '{ robots: 2, battery: { runHours: 8, chargeHours: 2 } }' }, /^hall\.yaml: fleet\.battery \(line 9\): got a battery, expected at least one charger \(C\) in the layout/],
  ['negative runHours', { fleet: '{ robots: 2, battery: { runHours: -8, chargeHours: 2 } }' }, /fleet\.battery\.runHours \(line 9\): got -8, expected hours of operation on a full charge > 0/],
  ['runHours .nan', { fleet: '{ robots: 2, battery: { runHours: .nan, chargeHours: 2 } }' }, /fleet\.battery\.runHours \(line 9\): got NaN/],
  ['chargeHours 0', { fleet: '{ robots: 2, battery: { runHours: 8, chargeHours: 0 } }' }, /fleet\.battery\.chargeHours \(line 9\): got 0, expected hours to charge from empty to full > 0/],
  ['chargeHours missing', { fleet: '{ robots: 2, battery: { runHours: 8 } }' }, /fleet\.battery\.chargeHours \(line 9\): got nothing \(the field is missing\), expected hours to charge/],
  ['chargeBelow 0', { fleet: '{ robots: 2, battery: { runHours: 8, chargeHours: 2, chargeBelow: 0 } }' }, /fleet\.battery\.chargeBelow \(line 9\): got 0, expected a charge fraction > 0 and < 1/],
  ['chargeUpTo 1.2', { fleet: '{ robots: 2, battery: { runHours: 8, chargeHours: 2, chargeUpTo: 1.2 } }' }, /fleet\.battery\.chargeUpTo \(line 9\): got 1\.2, expected a charge fraction > 0 and <= 1/],
  ['chargeUpTo below chargeBelow', { fleet: '{ robots: 2, battery: { runHours: 8, chargeHours: 2, chargeBelow: 0.5, chargeUpTo: 0.4 } }' }, /fleet\.battery\.chargeUpTo \(line 9\): got 0\.4, expected a charge fraction > chargeBelow \(0\.5\) and <= 1/],
  ['chargeBelow above the default chargeUpTo', { fleet: '{ robots: 2, battery: { runHours: 8, chargeHours: 2, chargeBelow: 0.95 } }' }, /fleet\.battery\.chargeBelow \(line 9\): got 0\.95, expected a charge fraction > 0 and < chargeUpTo \(0\.9\)/],
  ['unknown battery key', { fleet: '{ robots: 2, battery: { runHours: 8, chargeHours: 2, capacityKwh: 3 } }' }, /fleet\.battery\.capacityKwh \(line 9\): got unknown key "capacityKwh", expected one of runHours, chargeHours, chargeBelow, chargeUpTo/],
  ['battery as a word', { fleet: '{ robots: 2, battery: yes }' }, /fleet\.battery \(line 9\): got "yes", expected a mapping \{runHours, chargeHours, chargeBelow, chargeUpTo\}/],
  // Breakdowns
  ['negative mtbfHours', { faults: '{ breakdowns: { mtbfHours: -2, mttrMinutes: 30 } }' }, /faults\.breakdowns\.mtbfHours \(line 11\): got -2, expected a mean in hours > 0/],
  ['mttrMinutes 0', { faults: '{ breakdowns: { mtbfHours: 2, mttrMinutes: 0 } }' }, /faults\.breakdowns\.mttrMinutes \(line 11\): got 0, expected a mean in minutes > 0/],
  ['mttrMinutes missing', { faults: '{ breakdowns: { mtbfHours: 2 } }' }, /faults\.breakdowns\.mttrMinutes \(line 11\): got nothing \(the field is missing\), expected a mean in minutes > 0 \(exponential\)/],
  ['mtbfHours as text', { faults: '{ breakdowns: { mtbfHours: often, mttrMinutes: 30 } }' }, /faults\.breakdowns\.mtbfHours \(line 11\): got "often", expected a mean in hours > 0 \(exponential\), or \{dist: exponential, mean\}/],
  ['unknown distribution of time to failure', { faults: '{ breakdowns: { mtbfHours: { dist: weibull, shape: 2 }, mttrMinutes: 30 } }' }, /faults\.breakdowns\.mtbfHours\.dist \(line 11\): got "weibull", expected dist: exponential, uniform or fixed/],
  ['fixed repair time in the wrong unit', { faults: '{ breakdowns: { mtbfHours: 2, mttrMinutes: { dist: fixed, hours: 1 } } }' }, /faults\.breakdowns\.mttrMinutes\.hours \(line 11\): got unknown key "hours", expected one of dist, minutes \(for dist: fixed\)/],
  ['uniform time to failure with min > max', { faults: '{ breakdowns: { mtbfHours: { dist: uniform, min: 3, max: 2 }, mttrMinutes: 30 } }' }, /faults\.breakdowns\.mtbfHours\.max \(line 11\): got 2, expected a number of hours >= min \(3\)/],
  ['unknown key under faults', { faults: '{ breakdowns: { mtbfHours: 2, mttrMinutes: 30 }, jams: 1 }' }, /faults\.jams \(line 11\): got unknown key "jams", expected one of breakdowns/],
  ['faults as a list', { faults: '[breakdowns]' }, /faults \(line 11\): got the list \["breakdowns"\], expected a mapping \{breakdowns, delays\}/],
];

describe('operating-realism fields reject bad values with one line naming the field', () => {
  it.each(bad)('%s', (_name, parts, expected) => {
    const message = messageOf(yaml(parts));
    expect(message).toMatch(expected);
    expect(message).not.toContain('\n');
    expect(message.startsWith('hall.yaml: ')).toBe(true);
  });

  it('an unreachable charger is named like any other endpoint', () => {
    const walled = ['#########', '#P.....D#', '#H...#.D#', '#H..#C#.#', '#########'];
    const message = messageOf(yaml({ layout: walled }));
    expect(message).toMatch(/layout \(line 6\): got charger 5:3 that cannot be reached from pickup 1:1, expected every P, D, S, H and C cell in one connected area/);
  });
});

describe('operating-realism fields normalize to what the engine uses', () => {
  it('absent fields leave the scenario exactly as before (no new keys)', () => {
    const loaded = parseScenarioText(yaml({}), null);
    expect(Object.keys(loaded.handling)).toEqual(['pickupSeconds', 'dropSeconds']);
    expect(loaded.fleet).toEqual({ robots: 2 });
    expect('faults' in loaded).toBe(false);
    // An empty stations mapping overrides nothing.
    expect(Object.keys(parseScenarioText(yaml({ handling: '{ pickupSeconds: 4, stations: {} }' }), null).handling)).toEqual(['pickupSeconds', 'dropSeconds']);
  });

  it('resolves groups and cells to per-cell overrides; a cell key wins over its group', () => {
    const loaded = parseScenarioText(
      yaml({ handling: "{ pickupSeconds: 4, dropSeconds: 2, groups: { chutes: ['7:1', '7:2'], all: ['1:1', '7:1'] }, stations: { chutes: { dropSeconds: 5 }, '7:2': { dropSeconds: { dist: uniform, min: 8, max: 10 } }, all: { pickupSeconds: 6 } } }" }),
      null,
    );
    // Cells: 1:1 = 10, 7:1 = 16, 7:2 = 25 (y * 9 + x).
    expect(loaded.handling.stations).toEqual(
      new Map([
        [10, { pickupSeconds: { dist: 'fixed', seconds: 6 } }],
        [16, { dropSeconds: { dist: 'fixed', seconds: 5 } }],
        [25, { dropSeconds: { dist: 'uniform', min: 8, max: 10 } }],
      ]),
    );
  });

  it('round trips: pickupSeconds applies to storage points, dropSeconds to pick stations', () => {
    const layout = ['#######', '#S.S.D#', '#H.C..#', '#######'];
    const loaded = parseScenarioText(yaml({ layout, demand: '{ kind: saturated, mode: round-trip }', handling: "{ stations: { '3:1': { pickupSeconds: 7 }, '5:1': { dropSeconds: 9 } } }" }), null);
    expect(loaded.handling.stations).toEqual(new Map([[10, { pickupSeconds: { dist: 'fixed', seconds: 7 } }], [12, { dropSeconds: { dist: 'fixed', seconds: 9 } }]]));
    expect(messageOf(yaml({ layout, demand: '{ kind: saturated, mode: round-trip }', handling: "{ stations: { '3:1': { dropSeconds: 7 } } }" }))).toMatch(/expected it only for drop points \(D\) in round-trip mode/);
  });

  it('fills the battery defaults (chargeBelow 0.2, chargeUpTo 0.9, README)', () => {
    const loaded = parseScenarioText(yaml({ fleet: '{ robots: 2, battery: { runHours: 8, chargeHours: 1.5 } }' }), null);
    expect(loaded.fleet).toEqual({ robots: 2, battery: { runHours: 8, chargeHours: 1.5, chargeBelow: 0.2, chargeUpTo: 0.9 } });
  });

  it('turns MTBF hours and MTTR minutes into seconds; a bare number is an exponential mean', () => {
    const exponential = parseScenarioText(yaml({ faults: '{ breakdowns: { mtbfHours: 2, mttrMinutes: 30 } }' }), null);
    expect(exponential.faults).toEqual({ breakdowns: { timeToFailure: { dist: 'exponential', mean: 7200 }, repair: { dist: 'exponential', mean: 1800 } } });
    const others = parseScenarioText(yaml({ faults: '{ breakdowns: { mtbfHours: { dist: uniform, min: 1, max: 3 }, mttrMinutes: { dist: fixed, minutes: 12 } } }' }), null);
    expect(others.faults).toEqual({ breakdowns: { timeToFailure: { dist: 'uniform', min: 3600, max: 10800 }, repair: { dist: 'fixed', seconds: 720 } } });
  });
});
