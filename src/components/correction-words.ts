import type { Correction } from '@shared/api';

/** Where the right figure came from, in the builder's words. */
export const sourceWords: Record<Correction['source'], string> = {
  'another builder': 'another builder (their notes or build)',
  'mating part': 'a mating part',
  photograph: 'a photograph of the prototype',
  'other sheet': 'another sheet of the set',
  measurement: 'measured off the part or casting',
  other: 'somewhere else',
};

export const sourceOptions = (Object.keys(sourceWords) as Correction['source'][]).map((s) => ({
  value: s,
  label: sourceWords[s],
}));
