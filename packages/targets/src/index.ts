export { UTILITY_TYPES, APWA_COLOURS, type UtilityType } from './apwa';
export {
  decisionSchema,
  reviewSchema,
  siteIdentitySchema,
  emptyReview,
  parseReview,
  sameSite,
  readReview,
  writeReview,
  upsertDecision,
  matchDecisions,
  type Decision,
  type Review,
  type SiteIdentity,
  type AnchoredAnomaly,
} from './review';
