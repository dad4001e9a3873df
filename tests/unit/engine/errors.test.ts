import { describe, expect, it } from 'vitest';
import { CalibrationError, twoPointScale } from '@shared/engine/calibrate';
import { DrillError, nearestDrill } from '@shared/engine/drills';
import { EngineError } from '@shared/engine/errors';
import { ExpressionError, parseRelation } from '@shared/engine/expression';
import { QuantityError, parseQuantity } from '@shared/engine/quantity';
import { ShopMathError, boltCircle } from '@shared/engine/shop-math';
import { ThreadError, threadByDesignation } from '@shared/engine/threads';

function thrown(f: () => unknown): unknown {
  try {
    f();
  } catch (e) {
    return e;
  }
  throw new Error('did not throw');
}

describe('one EngineError family', () => {
  it('every module error is an EngineError with a code, a message and a location, and still its own class', () => {
    const quantity = thrown(() => parseQuantity('3/0'));
    expect(quantity).toBeInstanceOf(QuantityError);
    expect(quantity).toBeInstanceOf(EngineError);
    expect(quantity).toMatchObject({ code: 'bad-quantity', at: 2, location: { at: 2 } });

    const expression = thrown(() => parseRelation('x = a[1]'));
    expect(expression).toBeInstanceOf(ExpressionError);
    expect(expression).toBeInstanceOf(EngineError);
    expect(expression).toMatchObject({ code: 'forbidden', at: 5, location: { at: 5 } });

    const calibration = thrown(() =>
      twoPointScale({ a: { x: 0, y: 0 }, b: { x: 0, y: 0 }, lengthMm: 10 }),
    );
    expect(calibration).toBeInstanceOf(CalibrationError);
    expect(calibration).toBeInstanceOf(EngineError);
    expect((calibration as EngineError).code).toBe('coincident-points');

    const thread = thrown(() => threadByDesignation('M99'));
    expect(thread).toBeInstanceOf(ThreadError);
    expect(thread).toBeInstanceOf(EngineError);
    expect((thread as EngineError).location).toEqual({ input: 'M99' });

    const drill = thrown(() => nearestDrill(-1, 'metric'));
    expect(drill).toBeInstanceOf(DrillError);
    expect(drill).toBeInstanceOf(EngineError);

    const shop = thrown(() => boltCircle({ pcd: -1, count: 6 }));
    expect(shop).toBeInstanceOf(ShopMathError);
    expect(shop).toBeInstanceOf(EngineError);
    expect((shop as EngineError).message).toMatch(/positive/);
  });
});
