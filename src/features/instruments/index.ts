/** The instruments feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { instrumentKeys } from './api/keys';
export { useInstruments } from './api/useInstruments';
export { useInstrument } from './api/useInstrument';
export { useCreateInstrument } from './api/useCreateInstrument';
export { useCalibration } from './api/useCalibration';
export { useCreateCalibration } from './api/useCreateCalibration';
export { useUpdateCalibration } from './api/useUpdateCalibration';
export { useCalibrationTransition } from './api/useCalibrationTransition';
export { InstrumentList } from './components/InstrumentList';
export { RecordInstrumentDialog } from './components/RecordInstrumentDialog';
export { CalibrationPanel } from './components/CalibrationPanel';
export { CalibrationVersions } from './components/CalibrationVersions';
export { InstrumentPicker } from './components/InstrumentPicker';
export { useFieldShift } from './api/useFieldShift';
export { useMeasureBleed, useMeasureShift } from './api/useMeasureCalibration';
export { CrossCorrelationChart } from './components/CrossCorrelationChart';
export type { CompositeSlot } from './components/CalibrationSourcesView';
export type { UploadSlot } from './components/MeasureCalibration';
