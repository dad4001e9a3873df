import { describe, expect, it } from 'vitest';
import {
  evaluateFeatures,
  sortForReadout,
  type FairsheetModelInput,
  type FeatureResult,
} from '@shared/engine';
import { kestrelModel } from '../../fixtures/kestrel-model';

type Part = NonNullable<FairsheetModelInput['parts']>[number];
type Feature = NonNullable<FairsheetModelInput['features']>[number];

function model(
  units: 'in' | 'mm',
  dimensions: FairsheetModelInput['dimensions'],
  parts: Part[],
  features: Feature[],
  relations: FairsheetModelInput['relations'] = [],
): FairsheetModelInput {
  return { format: 'fairsheet.model', version: 1, units, dimensions, relations, parts, features };
}

const plate: Part = { id: 'plate', name: 'Plate', material: 'mild-steel' };

function feature(r: ReturnType<typeof evaluateFeatures>, id: string): FeatureResult {
  const f = r.features.find((x) => x.id === id);
  if (!f) throw new Error(`no feature ${id}`);
  return f;
}

const close = (actual: number | null, expected: number, tol = 5e-6) => {
  expect(actual).not.toBeNull();
  expect(Math.abs((actual as number) - expected)).toBeLessThanOrEqual(tol);
};

describe('evaluateFeatures: pattern positions', () => {
  it('expands 6 holes on PCD 100 from 0° to the published coordinates (check-values §10)', () => {
    const r = evaluateFeatures(
      model(
        'mm',
        [{ name: 'pcd', kind: 'stated', value: 100, tol: 0.1 }],
        [plate],
        [
          {
            id: 'bolts',
            part: 'plate',
            kind: 'hole',
            x: 0,
            y: 0,
            drill: '6.6 mm',
            pattern: { type: 'circle', count: 6, pcd: 'pcd' },
          },
        ],
      ),
    );
    const rows = feature(r, 'bolts').rows;
    // [computed] check-values §10: (50, 0), (25, 43.30127), (−25, 43.30127), (−50, 0), …
    const expected: [number, number][] = [
      [50, 0],
      [25, 43.30127],
      [-25, 43.30127],
      [-50, 0],
      [-25, -43.30127],
      [25, -43.30127],
    ];
    expect(rows).toHaveLength(6);
    rows.forEach((row, i) => {
      close(row.x.value, expected[i]![0]);
      close(row.y.value, expected[i]![1]);
    });
    // The stack-up comes from the solver: ∂x₀/∂pcd = 1/2, so ±0.1 on the PCD is ±0.05 on x₀.
    close(rows[0]!.x.worstCase, 0.05, 1e-9);
    expect(rows[0]!.x.contributors.map((c) => c.name)).toEqual(['pcd']);
    expect(rows[1]!.label).toBe('bolts 2/6');
  });

  it('expands 5 holes on PCD 50 from 90° (check-values §10)', () => {
    const r = evaluateFeatures(
      model(
        'mm',
        [{ name: 'pcd', kind: 'stated', value: 50 }],
        [plate],
        [
          {
            id: 'b',
            part: 'plate',
            kind: 'hole',
            x: 0,
            y: 0,
            pattern: { type: 'circle', count: 5, pcd: 'pcd', startDeg: 90 },
          },
        ],
      ),
    );
    // [computed] check-values §10.
    const expected: [number, number][] = [
      [0, 25],
      [-23.77641, 7.72542],
      [-14.69463, -20.22542],
      [14.69463, -20.22542],
      [23.77641, 7.72542],
    ];
    feature(r, 'b').rows.forEach((row, i) => {
      close(row.x.value, expected[i]![0]);
      close(row.y.value, expected[i]![1]);
    });
  });

  it('expands a row from its first hole by the pitch along its direction', () => {
    const r = evaluateFeatures(
      model(
        'in',
        [
          { name: 'edge', kind: 'stated', value: '1/2' },
          { name: 'pitch', kind: 'stated', value: '3/4' },
        ],
        [plate],
        [
          {
            id: 'row',
            part: 'plate',
            kind: 'hole',
            x: 'edge',
            y: 'edge',
            pattern: { type: 'row', count: 3, pitch: 'pitch', angleDeg: 90 },
          },
        ],
      ),
    );
    const rows = feature(r, 'row').rows;
    expect(rows.map((h) => h.x.value)).toEqual([0.5, 0.5, 0.5]);
    rows.forEach((h, i) => close(h.y.value, 0.5 + 0.75 * i, 1e-12));
    // The third hole rests on the edge once and the pitch twice: 1/64 + 2 × 1/64.
    close(rows[2]!.y.worstCase, 3 / 64, 1e-12);
  });
});

describe('evaluateFeatures: provenance and stack-up', () => {
  const dims: FairsheetModelInput['dimensions'] = [
    { name: 'a', kind: 'stated', value: '2' },
    { name: 'b', kind: 'scaled', value: '1.02' },
    { name: 'c', kind: 'assumed', value: '1/4' },
    { name: 'd', kind: 'derived' },
  ];
  const r = evaluateFeatures(
    model(
      'in',
      dims,
      [plate],
      [
        { id: 'p1', part: 'plate', kind: 'hole', x: 'a', y: 'b', drill: '#29' },
        { id: 'p2', part: 'plate', kind: 'hole', x: 'a + b / 2', y: 0, drill: '#29' },
        { id: 'p3', part: 'plate', kind: 'hole', x: 'd', y: 0.25, drill: '#29' },
      ],
      [{ id: 'rd', expr: 'd = a + c' }],
    ),
  );

  it('names the kind of a bare given name and derived for an expression', () => {
    expect(feature(r, 'p1').x.provenance).toBe('stated');
    expect(feature(r, 'p1').y.provenance).toBe('scaled');
    const p2 = feature(r, 'p2');
    expect(p2.x.provenance).toBe('derived');
    expect(p2.x.restsOn).toEqual(['stated', 'scaled']);
    close(p2.x.value, 2.51, 1e-12);
    // 1 × 1/64 (a, a whole inch: fraction rule) + 1/2 × the scaled floor 0.5 mm.
    close(p2.x.worstCase, 1 / 64 + 0.5 * (0.5 / 25.4), 1e-9);
    expect(p2.y.provenance).toBe('datum');
  });

  it('follows a derived name to the given kinds it rests on, and calls a typed figure assumed', () => {
    const p3 = feature(r, 'p3');
    expect(p3.x.provenance).toBe('derived');
    expect(p3.x.restsOn).toEqual(['stated', 'assumed']);
    close(p3.x.value, 2.25, 1e-12);
    expect(p3.y.provenance).toBe('assumed');
  });

  it('never shows the hidden dimensions it solved through', () => {
    expect(JSON.stringify(r)).not.toMatch(/__feat/);
  });

  it('keeps clear of a builder’s name that starts like the hidden ones', () => {
    const clash = evaluateFeatures(
      model(
        'mm',
        [{ name: '__feat_0', kind: 'stated', value: 12 }],
        [plate],
        [{ id: 'h', part: 'plate', kind: 'hole', x: '__feat_0 * 2', y: 3 }],
      ),
    );
    expect(clash.issues).toEqual([]);
    expect(feature(clash, 'h').x.value).toBe(24);
    expect(feature(clash, 'h').x.contributors.map((c) => c.name)).toEqual(['__feat_0']);
  });
});

describe('evaluateFeatures: threads, drills and speeds', () => {
  const steel = (drillSet: Part['drillSet'], material = 'mild-steel'): Part => ({
    id: 'p',
    name: 'P',
    material,
    drillSet,
  });
  const one = (part: Part, f: Omit<Feature, 'id' | 'part' | 'x' | 'y'>) =>
    feature(
      evaluateFeatures(model('mm', [], [part], [{ id: 'f', part: 'p', x: 1, y: 1, ...f }])),
      'f',
    );

  it('taps 2BA with a 4.0 mm drill at 75 % (ministeam Set A, check-values §1.3)', () => {
    const f = one(steel('metric'), { kind: 'tapped', thread: '2BA' });
    expect(f.thread?.designation).toBe('2BA');
    close(f.tap?.stock.mm ?? null, 4.0, 1e-9);
    expect(f.drill?.role).toBe('tap');
    // Set A lists 72 % for the 4.0 mm drill (check-values §1.3).
    close(f.drill?.percentThread ?? null, 72, 1);
    expect(f.tap?.source).toMatch(/BS 93/);
  });

  it('taps M4 with 3.3 mm (ISO 2306-type chart, check-values §2.2)', () => {
    const f = one(steel('metric'), { kind: 'tapped', thread: 'M4' });
    close(f.drill?.mm ?? null, 3.3, 1e-9);
    close(f.tap?.published?.mm ?? null, 3.3, 1e-9);
  });

  it('taps 1/4-20 UNC with a #7 from the number/letter set (Machinery’s Handbook, check-values §3)', () => {
    const f = one(steel('numberLetter'), { kind: 'tapped', thread: '1/4-20 UNC' });
    expect(f.drill?.label).toBe('#7');
  });

  it('follows the target % thread: 60 % leaves a larger drill than 75 %', () => {
    const at75 = one(steel('metric'), { kind: 'tapped', thread: '4BA' });
    const at60 = one(steel('metric'), { kind: 'tapped', thread: '4BA', percentThread: 60 });
    expect(at60.tap!.theoreticalMm).toBeGreaterThan(at75.tap!.theoreticalMm);
    expect(at60.drill!.percentThread!).toBeLessThan(at75.drill!.percentThread!);
  });

  it('gives a clearance hole its close or free drill, raised to a stock drill of the part’s set', () => {
    // M6 close 6.4, free 6.6 (ISO 273, utilitiesbunker.com, check-values §2.2).
    const free = one(steel('metric'), { kind: 'hole', thread: 'M6' });
    expect(free.clearance?.fit).toBe('free');
    close(free.clearance?.free.mm ?? null, 6.6, 1e-9);
    close(free.drill?.mm ?? null, 6.6, 1e-9);
    const closeFit = one(steel('metric'), { kind: 'hole', thread: 'M6', clearance: 'close' });
    close(closeFit.drill?.mm ?? null, 6.4, 1e-9);
    // 4BA close is #27 (3.658 mm, IBLS, check-values §1.3): the metric set has 3.7 mm.
    const ba = one(steel('metric'), { kind: 'hole', thread: '4BA', clearance: 'close' });
    expect(ba.clearance?.close.label).toBe('#27');
    expect(ba.drill?.label).toBe('3.7 mm');
  });

  it('reads a drill by label or size', () => {
    expect(one(steel('metric'), { kind: 'hole', drill: '#29' }).drill?.inch).toBe(0.136);
    const odd = one(steel('metric'), { kind: 'hole', drill: '3.33 mm' });
    close(odd.drill?.mm ?? null, 3.33, 1e-9);
    expect(odd.drill?.nearestStock?.label).toBe('3.3 mm');
  });

  it('gives the spindle speed N = 1000·Vc/(π·D) from the material’s conservative speed (check-values §9)', () => {
    // Free-cutting steel drills as mild steel, 20–30 m/min [published] incoherency.co.uk (§9):
    // Vc = 20 m/min, D = 10 mm: 636.6 rpm [computed].
    const fc = one(steel('metric', 'free-cutting-steel'), { kind: 'hole', drill: '10 mm' });
    close(fc.speed?.rpm ?? null, 636.6, 0.05);
    expect(fc.speed?.vcMPerMin).toBe(20);
    expect(fc.speed?.source).toMatch(/workshop practice/);
    // Mild steel drilling 20–30 m/min [published] incoherency.co.uk: 20 at 20 mm is 318.3 rpm.
    const ms = one(steel('metric'), { kind: 'hole', drill: '20 mm' });
    close(ms.speed?.rpm ?? null, 318.31, 0.01);
  });
});

describe('evaluateFeatures: problems are reported per feature, never thrown', () => {
  const r = evaluateFeatures(
    model(
      'in',
      [
        { name: 'a', kind: 'stated', value: '1' },
        { name: 'open', kind: 'derived' },
        { name: 'open2', kind: 'derived' },
        { name: 'ang', kind: 'stated', value: '30 deg', quantity: 'angle' },
      ],
      [plate, { id: 'odd', name: 'Odd', material: 'unobtainium' }],
      [
        { id: 'lost', part: 'nowhere', kind: 'hole', x: 'a', y: 'a' },
        { id: 'bad_drill', part: 'plate', kind: 'hole', x: 'a', y: 'a', drill: 'a big one' },
        { id: 'bad_thread', part: 'plate', kind: 'tapped', x: 'a', y: 'a', thread: '13BA' },
        { id: 'no_thread', part: 'plate', kind: 'tapped', x: 'a', y: 'a' },
        { id: 'unsolved', part: 'plate', kind: 'hole', x: 'open', y: 'a' },
        { id: 'syntax', part: 'plate', kind: 'hole', x: 'a +', y: 'a' },
        { id: 'unknown', part: 'plate', kind: 'hole', x: 'a + b', y: 'a' },
        { id: 'units', part: 'plate', kind: 'hole', x: 'ang', y: 'a' },
        { id: 'fine', part: 'plate', kind: 'hole', x: 'a', y: 'a', drill: '#29' },
        { id: 'fine', part: 'plate', kind: 'hole', x: 'a', y: 'a' },
        { id: 'speedless', part: 'odd', kind: 'hole', x: 'a', y: 'a', drill: '#29' },
      ],
      [{ id: 'o', expr: 'open + open2 = a' }],
    ),
  );
  const codes = (id: string) => feature(r, id).errors.map((e) => e.code);

  it('names each problem beside its feature', () => {
    expect(codes('lost')).toEqual(['unknown-part']);
    expect(codes('bad_drill')).toEqual(['unreadable-drill']);
    expect(codes('bad_thread')).toEqual(['unknown-thread']);
    expect(codes('no_thread')).toEqual(['missing-thread']);
    expect(codes('unsolved')).toEqual(['unsolved']);
    expect(feature(r, 'unsolved').x.value).toBeNull();
    expect(codes('syntax')).toEqual(['expression']);
    expect(codes('unknown')).toEqual(['unknown-name']);
    expect(feature(r, 'unknown').errors[0]!.message).toMatch(/'b'/);
    expect(codes('units')).toEqual(['unit-mismatch']);
    expect(codes('fine')).toEqual([]);
    expect(r.issues.map((i) => i.code)).toContain('duplicate-id');
    expect(r.issues.map((i) => i.code)).toContain('unknown-material');
    expect(feature(r, 'speedless').speed).toBeUndefined();
  });

  it('leaves the drawing’s own status to the drawing', () => {
    // The open pair (open, open2) makes the model incomplete; the feature errors do not make it invalid.
    expect(r.status).toBe('incomplete');
  });

  it('answers an unreadable model with one schema issue', () => {
    const bad = evaluateFeatures({ format: 'something else' });
    expect(bad.status).toBe('invalid');
    expect(bad.issues[0]!.code).toBe('schema');
  });
});

describe('evaluateFeatures: pressure, stacks and readout order', () => {
  const r = evaluateFeatures(
    model(
      'mm',
      [
        { name: 'dia', kind: 'stated', value: 40 },
        { name: 'pcd', kind: 'scaled', value: 30 },
      ],
      [
        { id: 'flange', name: 'Flange', material: 'bronze', pressure: true },
        { id: 'left', name: 'Left', material: 'mild-steel', stack: 'pair' },
        { id: 'right', name: 'Right', material: 'mild-steel', stack: 'pair' },
      ],
      [
        { id: 'bore', part: 'flange', kind: 'hole', x: 'dia / 2', y: 'dia / 2', drill: '10 mm' },
        {
          id: 'studs',
          part: 'flange',
          kind: 'hole',
          x: 'dia / 2',
          y: 'dia / 2',
          thread: 'M4',
          pattern: { type: 'circle', count: 4, pcd: 'pcd', startDeg: 45 },
        },
        { id: 'l1', part: 'left', kind: 'hole', x: 30, y: 10 },
        { id: 'l2', part: 'left', kind: 'hole', x: 10, y: 10 },
        { id: 'r1', part: 'right', kind: 'hole', x: 20, y: 5 },
      ],
    ),
  );

  it('warns on every feature of a pressure-bearing part that rests on a scaled or assumed value', () => {
    expect(feature(r, 'studs').warnings).toHaveLength(1);
    expect(feature(r, 'studs').warnings[0]!.names).toEqual(['pcd']);
    expect(feature(r, 'bore').warnings).toEqual([]);
    expect(r.groups.find((g) => g.id === 'flange')?.pressureFeatures).toEqual(['studs']);
  });

  it('lists a stack once with its parts', () => {
    const pair = r.groups.find((g) => g.stack === 'pair');
    expect(pair?.parts).toEqual(['left', 'right']);
    expect(r.groups).toHaveLength(2);
    // Y ascending, then X ascending.
    expect(pair?.rows.map((row) => row.feature)).toEqual(['r1', 'l2', 'l1']);
  });

  it('puts unsolved positions last in readout order', () => {
    const at = (x: number | null, y: number | null) => ({
      x: { value: x },
      y: { value: y },
    });
    const sorted = sortForReadout([at(1, null), at(2, 1), at(1, 1), at(0, 2)] as never[]);
    expect(sorted).toEqual([at(1, 1), at(2, 1), at(0, 2), at(1, null)]);
  });
});

describe('the Kestrel demo parts', () => {
  const r = evaluateFeatures(kestrelModel);

  it('lines the hornblock’s tapped holes up with the frame’s clearance holes', () => {
    const frame = feature(r, 'h1_fwd');
    const frameAft = feature(r, 'h1_aft');
    const hbFwd = feature(r, 'hb_flange_fwd');
    const hbAft = feature(r, 'hb_flange_aft');
    const frameSpacing = frameAft.rows[0]!.x.value! - frame.rows[0]!.x.value!;
    const hbSpacing = hbAft.rows[0]!.x.value! - hbFwd.rows[0]!.x.value!;
    close(hbSpacing, frameSpacing, 1e-12);
    close(
      hbFwd.rows[1]!.y.value! - hbFwd.rows[0]!.y.value!,
      frame.rows[1]!.y.value! - frame.rows[0]!.y.value!,
      1e-12,
    );
    expect(frame.thread?.designation).toBe('4BA');
    expect(frame.clearance).toBeDefined();
    expect(hbFwd.tap).toBeDefined();
  });

  it('holds 6BA, 4BA, 1/8x40 ME and M4, a pattern, a stack and a pressure warning', () => {
    const threads = new Set(r.features.map((f) => f.thread?.designation).filter(Boolean));
    expect([...threads].sort()).toEqual(['1/8x40 ME', '4BA', '6BA', 'M4']);
    expect(r.groups.find((g) => g.stack === 'frames')?.parts).toEqual(['frame_l', 'frame_r']);
    expect(r.features.some((f) => f.pattern?.type === 'circle')).toBe(true);
    expect(r.issues.filter((i) => i.code === 'pressure').map((i) => i.feature)).toEqual([
      'sf_studs',
    ]);
    // The stretcher hole still needs one more dimension along the frame.
    expect(feature(r, 'stretcher_hole').errors.map((e) => e.code)).toEqual(['unsolved']);
  });
});
