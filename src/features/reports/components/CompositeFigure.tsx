/** A representative field: the frozen two-channel composite (channel 1 green, channel 2 magenta) with the cell outlines drawn over it. */
import type { Composite } from '@shared/schemas/reports';

function Outline({ g, excluded }: { g: Record<string, unknown>; excluded: boolean }) {
  const common = { fill: 'none', stroke: excluded ? '#f59e0b' : '#ffffff', strokeWidth: 1.5, vectorEffect: 'non-scaling-stroke' as const, strokeDasharray: excluded ? '4 3' : undefined };
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

export function CompositeFigure({ composite, conditionName }: { composite: Composite; conditionName: string }) {
  const { width, height } = composite;
  return (
    <figure className="report-figure">
      <div className="relative w-full overflow-hidden rounded border border-ink/15 bg-ink" style={{ aspectRatio: `${width} / ${height}` }}>
        {composite.png ? (
          <img src={composite.png} alt={`Composite of field ${composite.fieldName}`} className="absolute inset-0 h-full w-full object-fill [image-rendering:pixelated]" />
        ) : (
          <div className="absolute inset-0 flex items-center justify-center text-xs text-white/70">image not available</div>
        )}
        <svg viewBox={`0 0 ${width} ${height}`} preserveAspectRatio="none" className="absolute inset-0 h-full w-full" aria-hidden="true">
          {composite.outlines.map((o) => (
            <Outline key={o.cellId} g={o.geometry} excluded={o.excluded} />
          ))}
        </svg>
      </div>
      <figcaption className="mt-1 text-xs text-ink-soft">
        <span className="font-medium text-ink">{conditionName}</span> · {composite.coverslipName} · {composite.fieldName} ({width} × {height} px, {composite.outlines.length} cells; dashed = excluded).
        Channel 1 <span className="text-ch1">green</span>, channel 2 <span className="text-ch2">magenta</span>
        {composite.ranges && `, shown ${composite.ranges.lo1}–${composite.ranges.hi1} and ${composite.ranges.lo2}–${composite.ranges.hi2}`}.
      </figcaption>
    </figure>
  );
}
