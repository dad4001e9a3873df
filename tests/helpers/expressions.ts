// Expression text of random depth and width for property tests: deep parentheses, long sums,
// wide min/max/hypot, unary minus chains, powers, nested calls and huge numbers, layered inside
// one another. Layers wrap an inner expression and add their sizes, never multiply them, so a
// case stays under a few tens of kilobytes while any one layer may be far past a limit.
import fc from 'fast-check';

const atom = fc.oneof(
  { weight: 6, arbitrary: fc.constantFrom('a', 'b', 'c', 'frame.w') },
  { weight: 3, arbitrary: fc.constantFrom('1', '2.5', '3/16 in', '25 mm', '30 deg', 'pi') },
  // Huge and tiny numbers: past the double range, many digits, denormals.
  {
    weight: 2,
    arbitrary: fc.oneof(
      fc.constantFrom('1e308', '1e309', '1e-400', '4.9e-324', '0'),
      fc.integer({ min: 1, max: 3000 }).map((n) => '9'.repeat(n)),
      fc.integer({ min: 1, max: 400 }).map((n) => `0.${'0'.repeat(n)}1`),
    ),
  },
);

/** A width: mostly small, sometimes past a limit, now and then far past it. */
const width = fc.oneof(
  { weight: 6, arbitrary: fc.integer({ min: 0, max: 40 }) },
  { weight: 3, arbitrary: fc.integer({ min: 40, max: 400 }) },
  { weight: 1, arbitrary: fc.integer({ min: 400, max: 6000 }) },
);

/** One layer wrapped round an inner expression; layers add their sizes, never multiply them. */
const layer = fc.oneof(
  width.map((n) => (e: string) => '('.repeat(n) + e + ')'.repeat(n)),
  width.map((n) => (e: string) => '-'.repeat(n) + e),
  fc
    .tuple(width, atom, fc.constantFrom(' + ', '-', ' - ', '*', '/', '^', '^-'), fc.nat())
    .map(([n, a, op, k]) => (e: string) => {
      const terms = Array<string>(n + 1).fill(a);
      terms[k % terms.length] = `(${e})`;
      return terms.join(op);
    }),
  fc
    .tuple(fc.constantFrom('min', 'max', 'hypot', 'atan2', 'sqrt', 'abs'), width, atom, fc.nat())
    .map(([fn, n, a, k]) => (e: string) => {
      const args = Array<string>(n + 1).fill(a);
      args[k % args.length] = e;
      return `${fn}(${args.join(', ')})`;
    }),
  width.map((n) => (e: string) => 'sqrt('.repeat(n) + e + ')'.repeat(n)),
);

/** An expression over the names a, b, c and frame.w. */
export const expression = fc
  .tuple(atom, fc.array(layer, { minLength: 1, maxLength: 5 }))
  .map(([a, layers]) => layers.reduce((e, wrap) => wrap(e), a));
