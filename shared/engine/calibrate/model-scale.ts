/** A model's scale as builders write it, and a prototype's length brought to the model. */

import { MM_PER_FT, MM_PER_IN } from '../length';
import { parseMixedNumber } from '../quantity';
import { CalibrationError } from './types';

export interface ModelScale {
  /** model / full size: 1:8 → 0.125. */
  readonly ratio: number;
  /** As builders write it: `1:8`. */
  readonly label: string;
}

function formatRatioLabel(ratio: number): string {
  if (ratio >= 1) return `${Number(ratio.toPrecision(6))}:1`;
  return `1:${Number((1 / ratio).toPrecision(6))}`;
}

const NUM = String.raw`(\d*\s*[½¼¾⅛⅜⅝⅞⅓⅔⅙⅚⅕]|\d+[\s-]+\d+\/\d+|\d+\/\d+|\d+(?:\.\d*)?|\.\d+)`;
const RATIO_RE = new RegExp(String.raw`^${NUM}\s*[:/]\s*${NUM}$`);
const PER_FOOT_RE = new RegExp(
  String.raw`^${NUM}\s*(mm|millimet(?:re|er)s?|in(?:ch(?:es)?)?\.?|")\s*` +
    String.raw`(?:(?:to|=|per)\s*(?:(?:the|a|one|1)\s*)?(?:foot|feet|ft\.?|')|scale)$`,
  'i',
);

/**
 * Reads a model scale as builders write it and answers the ratio model / full size:
 * `1:8`, `1/8`, `1:11.3`, `2:1`, `1½ in to the foot`, `1 1/2" to 1 ft`, `3/4 in = 1 ft`,
 * `3/4" scale`, `7 mm to the foot`.
 *
 * @example parseModelScale('1½ in to the foot').ratio // 0.125
 * @example parseModelScale('1:11.3').ratio // 0.0885
 */
export function parseModelScale(text: string): ModelScale {
  const t = text.trim().replace(/\s+/g, ' ').replace(/[″]/g, '"').replace(/[′]/g, "'");
  let ratio: number | undefined;
  const r = RATIO_RE.exec(t);
  const f = r ? null : PER_FOOT_RE.exec(t);
  // Every group of RATIO_RE and PER_FOOT_RE is required, so a match holds each one.
  if (r) {
    const [m, full] = [parseMixedNumber(r[1]!), parseMixedNumber(r[2]!)];
    if (m !== undefined && full !== undefined && full > 0) ratio = m / full;
  } else if (f) {
    const n = parseMixedNumber(f[1]!);
    const unitMm = /^m/i.test(f[2]!) ? 1 : MM_PER_IN;
    if (n !== undefined) ratio = (n * unitMm) / MM_PER_FT;
  }
  if (ratio === undefined || !Number.isFinite(ratio) || ratio <= 0) {
    throw new CalibrationError(
      'bad-scale',
      `"${text}" is not a model scale (e.g. 1:8, 1/8, 1½ in to the foot, 3/4 in = 1 ft)`,
      { input: text },
    );
  }
  return { ratio, label: formatRatioLabel(ratio) };
}

/**
 * A length measured on a photo of the full-size prototype, brought to the model: both the
 * length and its ± are multiplied by the ratio (divided by 8 at 1:8).
 *
 * @example prototypeToModel({ lengthMm: 800, uncertaintyMm: 8 }, 1 / 8) // { lengthMm: 100, uncertaintyMm: 1 }
 */
export function prototypeToModel(
  measurement: { readonly lengthMm: number; readonly uncertaintyMm: number },
  ratio: number,
): { readonly lengthMm: number; readonly uncertaintyMm: number } {
  if (!Number.isFinite(ratio) || ratio <= 0) {
    throw new CalibrationError('bad-scale', `A model scale must be a positive ratio, not ${ratio}`);
  }
  return {
    lengthMm: measurement.lengthMm * ratio,
    uncertaintyMm: measurement.uncertaintyMm * ratio,
  };
}
