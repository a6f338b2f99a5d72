// The rules form as data, one module per step: which fields to show (resolve-specs), the text a
// person edits (rules-draft), the submitted inputs (rules-form-data), checks with the shared schema
// (rules-validation) and what changed (rules-changes). Pages import from here.
export { resolveSpecs } from './resolve-specs';
export { fromDraft, rowDraft, toDraft, type Draft, type DraftRow, type DraftValue, type FieldIssues, type KindDraft } from './rules-draft';
export { applyRowEdit, draftFromForm, fieldName, rowFieldName } from './rules-form-data';
export { errorPaths, fieldKeys, nearestField, placeIssues, toRulesPath, validateDraft, type Validation } from './rules-validation';
export { changedFields, idleNotes, sameValue } from './rules-changes';
