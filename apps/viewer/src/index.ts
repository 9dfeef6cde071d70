export { startViewerServer, type ViewerServer, type ViewerServerOptions } from './server/server';
export { ensureViewerBuilt, viewerBuildIsStale, VIEWER_ROOT, DIST_DIR } from './server/build';
export { resolveInside, parseRange, type Resolved } from './server/paths';
export { ReviewStore, HttpError, decisionInputSchema, type DecisionInput } from './server/review-store';
export { SerialQueue } from './server/queue';
export { anomalyAnchorLonLat } from './server/anchor';
export { CAUTIONS } from './server/cautions';
export { contentType } from './server/mime';
