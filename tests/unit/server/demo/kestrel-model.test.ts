// The demo model itself (the engine tests use their own copy, tests/fixtures/kestrel-model.ts):
// it must stay inside the engine's limits and keep the hornblock holes over the frame holes,
// or the demo a new user opens would be refused or would show holes that do not meet.
import { describe, expect, it } from 'vitest';
import { MODEL_LIMITS, evaluateFeatures, modelSchema } from '@shared/engine';
import { solveBody } from '@shared/api';
import { kestrelModel } from '../../../../server/demo/kestrel-model';

describe('the demo model', () => {
  it('keeps inside every limit, with room for a full Monte Carlo', () => {
    const m = modelSchema.parse(kestrelModel);
    expect(m.dimensions.length * 20_000).toBeLessThanOrEqual(MODEL_LIMITS.monteCarloWork);
    expect(
      solveBody.safeParse({ model: kestrelModel, monteCarlo: { samples: 20_000 } }).success,
    ).toBe(true);
  });

  it('lines the hornblock’s tapped holes up with the frame’s clearance holes', () => {
    const r = evaluateFeatures(kestrelModel);
    const row = (id: string) => {
      const f = r.features.find((x) => x.id === id);
      if (!f) throw new Error(`no feature ${id}`);
      return f.rows;
    };
    const [frameFwd, frameAft] = [row('h1_fwd'), row('h1_aft')];
    const [hbFwd, hbAft] = [row('hb_flange_fwd'), row('hb_flange_aft')];
    // Same spacing to 1e-12 in: both sides are written from the same dimensions.
    expect(
      Math.abs(
        hbAft[0]!.x.value! - hbFwd[0]!.x.value! - (frameAft[0]!.x.value! - frameFwd[0]!.x.value!),
      ),
    ).toBeLessThanOrEqual(1e-12);
    expect(
      Math.abs(
        hbFwd[1]!.y.value! - hbFwd[0]!.y.value! - (frameFwd[1]!.y.value! - frameFwd[0]!.y.value!),
      ),
    ).toBeLessThanOrEqual(1e-12);
  });
});
