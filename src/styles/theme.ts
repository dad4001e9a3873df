import type { GlobalThemeOverrides } from 'naive-ui';

/**
 * Fairsheet's own palette: ink blue on drawing-office paper, with a brass accent. Colours
 * never carry meaning alone; dimension kinds also differ by line style and glyph.
 */
export const palette = {
  ink: '#24405f',
  inkHover: '#2f5479',
  inkPressed: '#1a3049',
  inkSuppl: '#3a6590',
  brass: '#b7791f',
  paper: '#f7f4ec',
  card: '#fffdf8',
  rule: '#d9d2c0',
  text: '#1f2a36',
  muted: '#5b6675',
  danger: '#b3261e',
};

export const themeOverrides: GlobalThemeOverrides = {
  common: {
    fontFamily: "'IBM Plex Sans', system-ui, sans-serif",
    fontFamilyMono: "'IBM Plex Mono', ui-monospace, monospace",
    primaryColor: palette.ink,
    primaryColorHover: palette.inkHover,
    primaryColorPressed: palette.inkPressed,
    primaryColorSuppl: palette.inkSuppl,
    errorColor: palette.danger,
    textColorBase: palette.text,
    bodyColor: palette.paper,
    cardColor: palette.card,
    borderRadius: '4px',
    borderColor: palette.rule,
  },
  Card: { borderColor: palette.rule },
};
