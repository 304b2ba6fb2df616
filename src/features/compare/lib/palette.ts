/**
 * Syntopy's coverslip palette: eight hues chosen by us to stay distinguishable under the common colour-vision
 * deficiencies (spaced in lightness as well as hue; checked against deuteranope/protanope simulations by eye —
 * common practice, no formal source), paired with eight marker shapes so colour is never the only cue.
 */
export const COVERSLIP_COLORS = ['#1f5f99', '#e08a2e', '#2c9c86', '#b8336a', '#6a4fa3', '#9a7b16', '#56616b', '#6cb3e0'] as const;
export const MARKERS = ['circle', 'square', 'triangle', 'diamond', 'triangleDown', 'cross', 'star', 'wye'] as const;
export type Marker = (typeof MARKERS)[number];

export const coverslipColor = (i: number) => COVERSLIP_COLORS[((i % COVERSLIP_COLORS.length) + COVERSLIP_COLORS.length) % COVERSLIP_COLORS.length];
export const coverslipMarker = (i: number): Marker => MARKERS[Math.floor(i / COVERSLIP_COLORS.length + i) % MARKERS.length];

/** Condition line styles for overlaid histograms (colour + dash). */
export const CONDITION_STYLES = [
  { color: '#1f2a33', dash: '' },
  { color: '#0f766e', dash: '6 3' },
  { color: '#b45309', dash: '2 2' },
  { color: '#6a4fa3', dash: '8 3 2 3' },
  { color: '#b8336a', dash: '4 4' },
] as const;
export const conditionStyle = (i: number) => CONDITION_STYLES[i % CONDITION_STYLES.length];
