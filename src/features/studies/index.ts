/** The studies feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { useCreateCondition } from './api/useCreateCondition';
export { useReorder } from './api/useReorder';
export { useStudies } from './api/useStudies';
export { studyQueryOptions, useStudy } from './api/useStudy';
export { ConditionCard } from './components/ConditionCard';
export { CreateStudyForm } from './components/CreateStudyForm';
export { DeleteStudyDialog } from './components/DeleteStudyDialog';
export { EditStudyDialog } from './components/EditStudyDialog';
export { moved, refocusMove } from './components/MoveButtons';
export { NameDialog } from './components/NameDialog';
export { StudyLinks } from './components/StudyLinks';
export { StudyInstrument } from './components/StudyInstrument';
export { UploadToStudy } from './components/UploadToStudy';
export { StudyList } from './components/StudyList';
