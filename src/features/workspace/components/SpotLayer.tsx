/**
 * Spots drawn over the image (inside the viewer's image-space SVG): channel-1 spots as circles, channel-2
 * spots as diamonds (shape tells them apart without colour), pairs within d joined by a line. Coordinates are
 * the engine's: x right, y down, pixels, origin the top-left corner of pixel (0, 0).
 */
import type { SpotPair, Xy } from '../lib/spotView';

export const SPOT_COLORS = { ch1: '#86efac', ch2: '#f0abfc', pair: '#fde047' } as const;

export function SpotLayer({ spots1, spots2, pairs, radius }: { spots1: Xy[] | null; spots2: Xy[] | null; pairs: SpotPair[] | null; radius: number }) {
  const r = Math.max(1, radius);
  return (
    <g data-testid="spot-layer" pointerEvents="none">
      {pairs?.map((p, i) => <line key={`p${i}`} data-pair x1={p.x1} y1={p.y1} x2={p.x2} y2={p.y2} stroke={SPOT_COLORS.pair} strokeWidth={1.5} vectorEffect="non-scaling-stroke" />)}
      {spots1?.map(([x, y], i) => <circle key={`a${i}`} data-spot="1" cx={x} cy={y} r={r} fill="none" stroke={SPOT_COLORS.ch1} strokeWidth={1.5} vectorEffect="non-scaling-stroke" />)}
      {spots2?.map(([x, y], i) => (
        <path key={`b${i}`} data-spot="2" d={`M${x} ${y - r}L${x + r} ${y}L${x} ${y + r}L${x - r} ${y}Z`} fill="none" stroke={SPOT_COLORS.ch2} strokeWidth={1.5} vectorEffect="non-scaling-stroke" />
      ))}
    </g>
  );
}
