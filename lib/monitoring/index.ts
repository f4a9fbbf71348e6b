/**
 * Monitoring cores: recruitment projection against target and CONSORT flow counts with a printable
 * flow diagram. Pure functions; invalid input throws InvalidInputError (HTTP 400 at the API layer).
 * The server-side services beside them (queries, verification, safety) are imported from their own files.
 */
export { InvalidInputError } from './errors';
export {
  projectTargetDate,
  poissonCountCI,
  cumulativeByMonth,
  plannedLine,
  type ProjectionInput,
  type TargetProjection,
  type MonthCount,
  type PlannedMonth,
} from './projection';
export {
  consortCounts,
  consortSvg,
  escapeXml,
  POOLED_KEY,
  POOLED_LABEL,
  REASON_NOT_RECORDED,
  REASON_WITHHELD,
  OTHER_REASONS_COMBINED,
  type ConsortFact,
  type ConsortInput,
  type ConsortOptions,
  type ConsortCounts,
  type ConsortGroup,
  type ReasonCount,
  type ScreeningOutcome,
  type EndStatus,
} from './consort';
