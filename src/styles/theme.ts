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
  /** Brass dark enough for text on paper (5.4:1); the bright brass stays for rules and marks. */
  brassText: '#8a5a12',
  green: '#2d5a2d',
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
    // Tags and alerts write in these colours on a tint of them: the library's own blue, amber
    // and green fall below 4.5:1 there, these keep it (WCAG 2 AA, 1.4.3).
    infoColor: palette.inkSuppl,
    infoColorHover: palette.inkHover,
    infoColorPressed: palette.inkPressed,
    infoColorSuppl: palette.inkHover,
    warningColor: palette.brassText,
    warningColorHover: '#a06a18',
    warningColorPressed: '#70490e',
    warningColorSuppl: '#a06a18',
    successColor: palette.green,
    successColorHover: '#3b6e3b',
    successColorPressed: '#234823',
    successColorSuppl: '#3b6e3b',
    // Help and feedback lines under fields: the library's grey is 4.2:1 on white.
    textColor3: palette.muted,
    textColorBase: palette.text,
    bodyColor: palette.paper,
    cardColor: palette.card,
    borderRadius: '4px',
    borderColor: palette.rule,
  },
  Card: { borderColor: palette.rule },
};
