/** How large an expression may be, checked while its text is read. */
import { ExpressionError } from './error';

/**
 * How large one expression may be. A drawing's relations are chains of a few to a few dozen
 * names, and a whole locomotive's drawing set has no relation longer than a few lines; these
 * limits are far beyond that. They exist because every walk of a tree here (reading, binding,
 * compiling, evaluating) goes one call deeper per level, and mathjs's own parser about twenty
 * calls deeper per parenthesis: text of any size would otherwise overflow the stack. Each is
 * checked while the text is read, before anything recurses over it.
 */
export const EXPRESSION_LIMITS = Object.freeze({
  /** Characters of an expression (a feature's position), or of one side of a relation. */
  characters: 2000,
  /** Characters of a relation: room for two sides as long as an expression. */
  relationCharacters: 4000,
  /** Parentheses (a function call's own included) open inside one another. */
  nesting: 64,
  /**
   * Operations inside one another. Each `+` of a chain is one level deeper than the last, so
   * this is also the longest sum: 200 terms, where a real chain has a few dozen.
   */
  depth: 200,
  /** Arguments of one min, max or hypot. */
  arguments: 250,
});

export const thousands = (n: number) => n.toLocaleString('en-GB');

/** Refuses text over `limit` characters, at the first character past it. */
export function checkLength(text: string, limit: number, what: string): void {
  if (text.length > limit) {
    throw new ExpressionError(
      'over-limit',
      `${what} is at most ${thousands(limit)} characters; this one has ${thousands(text.length)}`,
      limit,
    );
  }
}
