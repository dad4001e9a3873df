/**
 * Stage 1, lex: splits the text into tokens with their offsets, refuses forbidden characters
 * and words where they stand, bounds the nesting of parentheses, and prepares the text for
 * mathjs (`in`, `"`, `°` and a qualifying dot replaced character for character by marks).
 */
import { ExpressionError } from './error';
import { EXPRESSION_LIMITS } from './limits';
import { CONSTANT_WORDS, DEG_MARK, INCH_MARK, OPERATOR_WORDS, QUALIFIER_MARK } from './vocabulary';

export interface Token {
  kind: 'num' | 'ident' | 'op' | 'paren' | 'comma' | 'eq';
  text: string;
  at: number;
}

const FORBIDDEN_CHARS: Record<string, string> = {
  '.': "'.' is only allowed inside a number (property access is not allowed)",
  '[': 'indexing and matrices are not allowed',
  ']': 'indexing and matrices are not allowed',
  '{': 'objects are not allowed',
  '}': 'objects are not allowed',
  "'": "' is not allowed in a relation (for feet write ft)",
  ';': 'write one relation at a time',
  '?': 'conditionals are not allowed',
  ':': 'ranges and conditionals are not allowed',
  '%': "'%' is not allowed",
  '!': "'!' is not allowed",
  '&': 'bitwise operators are not allowed',
  '|': 'bitwise operators are not allowed',
  '~': 'bitwise operators are not allowed',
  '<': 'comparisons are not allowed; a relation has a single =',
  '>': 'comparisons are not allowed; a relation has a single =',
};

const NUMBER_RE = /(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?/y;
const WORD_RE = /[A-Za-z_][A-Za-z0-9_]*/y;
const DIGIT = /[0-9]/;
const WORD_START = /[A-Za-z_]/;

/**
 * The whole character at i, for a message: both halves of a surrogate pair (an emoji), and
 * U+FFFD for half of one, so a message is always well-formed text.
 */
function characterAt(src: string, i: number): string {
  const c = src.codePointAt(i)!;
  return c >= 0xd800 && c <= 0xdfff ? '\ufffd' : String.fromCodePoint(c);
}

/** Splits a relation into tokens, refusing forbidden characters and words at their offset. */
export function lex(src: string): { tokens: Token[]; prepared: string } {
  // Characters to replace for mathjs, by offset; most relations need none.
  let out: string[] | null = null;
  const put = (at: number, c: string) => {
    out ??= src.split('');
    out[at] = c;
  };
  const tokens: Token[] = [];
  // Open parentheses: mathjs's parser recurses about twenty calls per level.
  let depth = 0;
  let i = 0;
  while (i < src.length) {
    const c = src.charAt(i);
    if (c === ' ' || c === '\t' || c === '\n' || c === '\r') {
      if (c !== ' ') put(i, ' '); // a newline would start a second mathjs statement
      i++;
      continue;
    }
    if (DIGIT.test(c) || (c === '.' && DIGIT.test(src[i + 1] ?? ''))) {
      if (c === '0' && /[xXbBoO]/.test(src[i + 1] ?? '') && /[0-9a-fA-F]/.test(src[i + 2] ?? '')) {
        throw new ExpressionError(
          'forbidden',
          'hexadecimal, binary and octal numbers are not allowed',
          i,
        );
      }
      NUMBER_RE.lastIndex = i;
      const m = NUMBER_RE.exec(src)!;
      tokens.push({ kind: 'num', text: m[0], at: i });
      i += m[0].length;
      continue;
    }
    if (WORD_START.test(c)) {
      WORD_RE.lastIndex = i;
      const m = WORD_RE.exec(src)!;
      const word = m[0];
      if (OPERATOR_WORDS.has(word))
        throw new ExpressionError('forbidden', `operator '${word}' is not allowed`, i);
      if (CONSTANT_WORDS.has(word))
        throw new ExpressionError('forbidden', `'${word}' is not allowed`, i);
      const dot = i + word.length;
      if (src[dot] === '.' && WORD_START.test(src[dot + 1] ?? '')) {
        // A part-qualified name, e.g. `hornblock.bolt_x`: one identifier.
        WORD_RE.lastIndex = dot + 1;
        const member = WORD_RE.exec(src)![0];
        put(dot, QUALIFIER_MARK);
        tokens.push({ kind: 'ident', text: `${word}${QUALIFIER_MARK}${member}`, at: i });
        i = dot + 1 + member.length;
        continue;
      }
      if (word === 'in') {
        put(i, INCH_MARK);
        put(i + 1, INCH_MARK);
        tokens.push({ kind: 'ident', text: INCH_MARK + INCH_MARK, at: i });
      } else {
        tokens.push({ kind: 'ident', text: word, at: i });
      }
      i += word.length;
      continue;
    }
    if (c === '"' || c === '°') {
      const mark = c === '"' ? INCH_MARK : DEG_MARK;
      put(i, mark);
      tokens.push({ kind: 'ident', text: mark, at: i });
      i++;
      continue;
    }
    if ('+-*/^'.includes(c)) {
      if ((c === '*' || c === '/') && src[i + 1] === c) {
        throw new ExpressionError('forbidden', `'${c}${c}' is not allowed`, i);
      }
      tokens.push({ kind: 'op', text: c, at: i });
      i++;
      continue;
    }
    if (c === '(' || c === ')') {
      depth += c === '(' ? 1 : -1;
      if (depth > EXPRESSION_LIMITS.nesting) {
        throw new ExpressionError(
          'over-limit',
          `parentheses are nested more than ${EXPRESSION_LIMITS.nesting} deep`,
          i,
        );
      }
      tokens.push({ kind: 'paren', text: c, at: i });
      i++;
      continue;
    }
    if (c === ',') {
      tokens.push({ kind: 'comma', text: c, at: i });
      i++;
      continue;
    }
    if (c === '=') {
      if (src[i + 1] === '=') {
        throw new ExpressionError(
          'forbidden',
          "comparison '==' is not allowed; a relation has a single =",
          i,
        );
      }
      tokens.push({ kind: 'eq', text: c, at: i });
      i++;
      continue;
    }
    if ((c === '<' || c === '>' || c === '!') && src[i + 1] === '=') {
      throw new ExpressionError(
        'forbidden',
        'comparisons are not allowed; a relation has a single =',
        i,
      );
    }
    const why = FORBIDDEN_CHARS[c];
    throw new ExpressionError(
      why ? 'forbidden' : 'syntax',
      why ?? `unexpected character '${characterAt(src, i)}'`,
      i,
    );
  }
  return { tokens, prepared: out ? (out as string[]).join('') : src };
}
