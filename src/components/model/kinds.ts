import type { DimensionKind } from '@shared/engine';

/**
 * How each kind of dimension is told apart everywhere (table, canvas, print): a glyph and a
 * line style as well as a colour, so it reads in greyscale and for colour-blind builders.
 */
export const kindLook: Record<
  DimensionKind,
  { glyph: string; word: string; color: string; dash: number[] }
> = {
  stated: { glyph: '■', word: 'stated', color: '#24405f', dash: [] },
  scaled: { glyph: '◇', word: 'scaled', color: '#7a4f9a', dash: [8, 4] },
  assumed: { glyph: '○', word: 'assumed', color: '#6b6b6b', dash: [2, 4] },
  asbuilt: { glyph: '▣', word: 'as built', color: '#2f6b4f', dash: [12, 3, 2, 3] },
  derived: { glyph: '▶', word: 'derived', color: '#b7791f', dash: [] },
};

export const kindOptions = (Object.keys(kindLook) as DimensionKind[]).map((k) => ({
  value: k,
  label: `${kindLook[k].glyph} ${kindLook[k].word}`,
}));
