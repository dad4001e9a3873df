import { describe, expect, it } from 'vitest';
import { reconcileRedundant, type RedundantRelation } from '@shared/engine/reconcile';

const names = ['overall', 'a', 'b', 'c'];
const rel = (
  id: string,
  residual: number,
  gradient: Array<[number, number]>,
): RedundantRelation => ({
  id,
  relations: [id],
  residual,
  scale: 10,
  gradient: new Map(gradient),
});

describe('reconcileRedundant', () => {
  const chain = (residual: number) =>
    rel('total', residual, [
      [0, 1],
      [1, -1],
      [2, -1],
      [3, -1],
    ]);
  const tol = [0.005, 0.005, 0.01, 0.02];

  it('passes a residual within Σ|∂r/∂g|·t as a check', () => {
    const out = reconcileRedundant({
      redundant: [chain(0.039)],
      halfBand: tol,
      shift: [0, 0, 0, 0],
      names,
      protectedValue: () => false,
    });
    expect(out.contradictions).toEqual([]);
    expect(out.checks[0]!.allowed).toBeCloseTo(0.04, 12);
  });

  it('passes a residual exactly at the allowance despite rounding', () => {
    const out = reconcileRedundant({
      redundant: [chain(0.04 + 1e-15)],
      halfBand: tol,
      shift: [0, 0, 0, 0],
      names,
      protectedValue: () => false,
    });
    expect(out.checks).toHaveLength(1);
  });

  it('flags a residual beyond the allowance and ranks the loosest value first when all explain it', () => {
    const out = reconcileRedundant({
      redundant: [chain(0.1)],
      halfBand: tol,
      shift: [0, 0, 0, 0],
      names,
      protectedValue: () => false,
    });
    const s = out.contradictions[0]!.suspects;
    expect(s.map((x) => x.name)).toEqual(['c', 'b', 'a', 'overall']); // a and overall tie: by name
    expect(s[0]!.score).toBeCloseTo(1, 12);
    expect(s[0]!.correction).toBeCloseTo(0.1, 12); // c + 0.1 closes the chain
    expect(s[0]!.normalised).toBeCloseTo(5, 12);
    expect(s.find((x) => x.name === 'overall')!.correction).toBeCloseTo(-0.1, 12);
  });

  it('leaves out protected (as-built) values', () => {
    const out = reconcileRedundant({
      redundant: [chain(0.1)],
      halfBand: tol,
      shift: [0, 0, 0, 0],
      names,
      protectedValue: (i) => i === 3,
    });
    expect(out.contradictions[0]!.suspects.map((x) => x.name)).not.toContain('c');
  });

  it('judges an unequal tolerance about its centre', () => {
    // Residual 0.05 lies outside ±0.04, but a centre shift of +0.02 on `overall` brings it to 0.07,
    // while a shift of −0.02 brings it to 0.03, inside.
    const out = (shift0: number) =>
      reconcileRedundant({
        redundant: [chain(0.05)],
        halfBand: tol,
        shift: [shift0, 0, 0, 0],
        names,
        protectedValue: () => false,
      });
    expect(out(-0.02).contradictions).toHaveLength(0);
    expect(out(0.02).contradictions).toHaveLength(1);
  });

  it('still ranks suspects when every input is exact', () => {
    const out = reconcileRedundant({
      redundant: [chain(0.1)],
      halfBand: [0, 0, 0, 0],
      shift: [0, 0, 0, 0],
      names,
      protectedValue: () => false,
    });
    expect(out.contradictions[0]!.suspects).toHaveLength(4);
    expect(out.contradictions[0]!.suspects[0]!.normalised).toBeNull();
  });

  it('uses agreeing relations to clear the values they share', () => {
    // r1 fails and uses a, b; r2 agrees and uses a: b is the one to blame.
    const out = reconcileRedundant({
      redundant: [
        rel('r1', 0.2, [
          [1, 1],
          [2, 1],
        ]),
        rel('r2', 0, [
          [1, 1],
          [3, -1],
        ]),
      ],
      halfBand: [0.01, 0.01, 0.01, 0.01],
      shift: [0, 0, 0, 0],
      names,
      protectedValue: () => false,
    });
    expect(out.checks.map((c) => c.relation)).toEqual(['r2']);
    const s = out.contradictions[0]!.suspects;
    expect(s[0]!.name).toBe('b');
    expect(s[0]!.score).toBeCloseTo(1, 12);
    expect(s[1]!.score).toBeLessThan(1);
  });
});
