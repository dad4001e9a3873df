/**
 * Fairsheet engine: the public surface. Pure TypeScript, no I/O; runs in the browser and on
 * the server with the same answers. See README.md in this folder.
 */
export { nearlyEqual, NUMERIC_TOLERANCE, factorDense, factorSparse, factorRows } from './numeric';
export type { LinearFactor, SparseRow } from './numeric';
export {
  MM_PER_IN,
  MM_PER_FT,
  LENGTH_PLACES,
  otherUnit,
  convertLength,
  roundTo,
  roundUpTo,
  lengthNumber,
  unitMark,
  lengthText,
  bothUnits,
  formatLength,
  toleranceText,
  nearestFraction,
  formatFraction,
  fractionText,
} from './length';
export type { ModelUnit, NearestFraction } from './length';
export { sizeText, drillMmText, drillText, tapDrillText, clearanceText } from './size-text';
export { EngineError } from './errors';
export type { EngineErrorLocation } from './errors';
export { parseQuantity, quantityIn, suggestNominal, QuantityError } from './quantity';
export type {
  Quantity,
  QuantityUnit,
  LengthUnit,
  WrittenForm,
  NominalSuggestion,
} from './quantity';
export {
  parseRelation,
  parseExpression,
  bindRelation,
  clearRelationCache,
  ExpressionError,
  EXPRESSION_LIMITS,
  RESERVED_NAMES,
  sinDeg,
  cosDeg,
} from './expression';
export type {
  ExprNode,
  ParsedRelation,
  CompiledRelation,
  ExpressionErrorCode,
  SymbolInfo,
  UnitSymbol,
  FunctionName,
} from './expression';
export {
  modelSchema,
  dimensionSchema,
  relationSchema,
  partSchema,
  featureSchema,
  toleranceDefaultsSchema,
  toleranceDefaults,
  impliedTolerance,
  scaledTolerance,
  DIMENSION_NAME,
  MODEL_LIMITS,
} from './model';
export type {
  LimitIssueParams,
  ModelLimit,
  FairsheetModel,
  FairsheetModelInput,
  ModelDimension,
  ModelRelation,
  ModelPart,
  ModelFeature,
  ToleranceDefaults,
  DimensionKind,
  QuantityKind,
} from './model';
export { analyseStructure, maximumMatching } from './structure';
export type { StructureResult, StructureBlock, UnderdeterminedPart } from './structure';
export { solveModel, solvePrepared, prepareModel } from './solve';
export type { SolveOptions, PreparedModel, PreparedDimension, PreparedRelation } from './solve';
export { reconcileRedundant } from './reconcile';
export type { RedundantRelation, ReconcileInput } from './reconcile';
export {
  propagateSensitivities,
  totalDerivative,
  stackUp,
  runMonteCarlo,
  mulberry32,
  normalSampler,
} from './stackup';
export type { Sensitivity, StackUp, StackUpTerm, MonteCarloInput } from './stackup';
export type {
  SolveResult,
  SolveStatus,
  ValueResult,
  ValueTrace,
  Contributor,
  Contradiction,
  Check,
  Suspect,
  OpenGroup,
  SolveError,
  SolveErrorCode,
  MonteCarloResult,
  MonteCarloValue,
} from './result';

export {
  diffModels,
  isEmptyDiff,
  summariseDiff,
  movedValues,
  applyDiff,
  fieldWords,
  diffItems,
  applyItems,
  sameJson,
} from './diff';
export type { ModelDiff, ItemChange, FieldChange, ValueMove } from './diff';

export { upstreamText } from './fingerprint';

export * from './calibrate';
export * from './threads';
export * from './drills';
export * from './shop-math';
export * from './features';
