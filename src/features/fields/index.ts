/** The fields feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { useField } from './api/useField';
export { useFieldPixels, useFieldSection, fetchFieldPixels } from './api/useFieldPixels';
export { FieldList } from './components/FieldList';
export { UploadFields } from './components/UploadFields';
export { fieldPreviewUrl } from './api/fieldPreviewUrl';
export { FieldInstrument } from './components/FieldInstrument';
export { useSetFieldInstrument } from './api/useSetFieldInstrument';
export { SampleSheetIntake } from './components/SampleSheetIntake';
export { PixelSizeEditor, ZStepEditor } from './components/PixelSizeEditor';
