/** A representative field: the frozen two-channel composite (channel 1 green, channel 2 magenta) with the cell outlines drawn over it. */
import type { Composite } from '@shared/schemas/reports';
import { plural } from '@shared/format/plural';

function Outline({ g, excluded, selected }: { g: Record<string, unknown>; excluded: boolean; selected: boolean }) {
  const common = {
    fill: selected ? 'rgba(255,255,255,0.12)' : 'transparent',
    stroke: selected ? '#facc15' : excluded ? '#f59e0b' : '#ffffff',
    strokeWidth: selected ? 2.5 : 1.5,
    vectorEffect: 'non-scaling-stroke' as const,
    strokeDasharray: excluded ? '4 3' : undefined,
  };
  switch (g.kind) {
    case 'polygon':
    case 'freehand':
      return <polygon points={(g.points as [number, number][]).map((p) => p.join(',')).join(' ')} {...common} />;
    case 'rect':
      return <rect x={g.x as number} y={g.y as number} width={g.width as number} height={g.height as number} {...common} />;
    case 'ellipse':
      return <ellipse cx={g.cx as number} cy={g.cy as number} rx={g.rx as number} ry={g.ry as number} {...common} />;
    default:
      return null; // label-image cells have no vector outline
  }
}

export function CompositeFigure({
  composite,
  conditionName,
  selectedCellId,
  pickable,
  onPick,
}: {
  composite: Composite;
  conditionName: string;
  selectedCellId?: number | null;
  /** cells whose pixel scatter the report holds (clicking one shows it) */
  pickable?: Set<number>;
  onPick?: (cellId: number) => void;
}) {
  const { width, height } = composite;
  return (
    <figure className="report-figure">
      <div className="relative w-full overflow-hidden rounded border border-ink/15 bg-ink" style={{ aspectRatio: `${width} / ${height}` }}>
        {composite.png ? (
          <img src={composite.png} alt={`Composite of field ${composite.fieldName}`} className="absolute inset-0 h-full w-full object-fill [image-rendering:pixelated]" />
        ) : (
          <div className="absolute inset-0 flex items-center justify-center text-xs text-white/70">image not available</div>
        )}
        <svg viewBox={`0 0 ${width} ${height}`} preserveAspectRatio="none" className="absolute inset-0 h-full w-full">
          {composite.outlines.map((o) =>
            pickable?.has(o.cellId) && onPick ? (
              <g
                key={o.cellId}
                role="button"
                tabIndex={0}
                aria-label={`Show the pixel scatter of ${o.name}`}
                className="cursor-pointer focus:outline-none"
                onClick={() => onPick(o.cellId)}
                onKeyDown={(e) => (e.key === 'Enter' || e.key === ' ') && (e.preventDefault(), onPick(o.cellId))}
              >
                <title>{o.name}</title>
                <Outline g={o.geometry} excluded={o.excluded} selected={selectedCellId === o.cellId} />
              </g>
            ) : (
              <Outline key={o.cellId} g={o.geometry} excluded={o.excluded} selected={selectedCellId === o.cellId} />
            ),
          )}
        </svg>
      </div>
      <figcaption className="mt-1 text-xs text-ink-soft">
        <span className="font-medium text-ink">{conditionName}</span> · {composite.coverslipName} · {composite.fieldName} ({width} × {height} px, {plural(composite.outlines.length, 'cell')}; dashed = excluded; yellow = the cell in the pixel scatter).
        Channel 1 <span className="text-ch1-ink">green</span>, channel 2 <span className="text-ch2-ink">magenta</span>
        {composite.ranges && `, shown ${composite.ranges.lo1}–${composite.ranges.hi1} and ${composite.ranges.lo2}–${composite.ranges.hi2}`}.
      </figcaption>
    </figure>
  );
}
