/** Coverslip colours: our own qualitative set, distinguishable in print and for common colour-vision deficiencies. */
export const COVERSLIP_COLOURS = ['#0f766e', '#c2410c', '#6d28d9', '#0369a1', '#a16207', '#be185d', '#4d7c0f', '#475569', '#b91c1c', '#0e7490'];
export const coverslipColour = (i: number) => COVERSLIP_COLOURS[((i % COVERSLIP_COLOURS.length) + COVERSLIP_COLOURS.length) % COVERSLIP_COLOURS.length];

export const fmtNum = (v: number | null | undefined, digits = 3) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : Number(v.toFixed(digits)).toString());
export const fmtP = (p: number | null | undefined) => (p === null || p === undefined ? '—' : p < 0.001 ? '< 0.001' : p.toFixed(3));
export const fmtDate = (iso: string) => new Date(iso).toLocaleString(undefined, { year: 'numeric', month: 'short', day: 'numeric', hour: '2-digit', minute: '2-digit' });
