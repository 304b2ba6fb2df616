/**
 * The product's standing cautions beside co-localization numbers (Compare, Cell table): what light-microscope
 * co-localization can and cannot show, what biases the coefficients, and research use only. `saturatedCells`
 * (from the data) adds a warning that saturation was flagged; 0 or undefined leaves it out. `where` says which
 * cells were counted (e.g. "on this page").
 */
import { Caution } from './Caution';
import { plural, noun } from '@shared/format/plural';

export function MeasurementCautions({ saturatedCells, where, className }: { saturatedCells?: number; where?: string; className?: string }) {
  return (
    <div className={className} aria-label="Cautions" role="group">
      {!!saturatedCells && saturatedCells > 0 && (
        <Caution title="Saturated pixels flagged" className="mb-2">
          {plural(saturatedCells, 'cell')}
          {where ? ` ${where}` : ''} {noun(saturatedCells, 'has', 'have')} pixels at the detector's ceiling or a clipping plateau. Clipped intensities bias every
          coefficient; these cells are marked “saturated” in the Cell table and in reports.
        </Caution>
      )}
      <Caution tone="info" title="What these numbers can and cannot show">
        Co-localization at light-microscope resolution (about 200 nm laterally) shows that two labels share the same places, not that the molecules interact. Saturated pixels, channel
        bleed-through, chromatic shift between channels and unequal image adjustment all bias the coefficients. Research use only; not for diagnosis.
      </Caution>
    </div>
  );
}
