/** Small helpers of the text outputs (report.html, its SVG maps, the GeoPackage styles). */

/** Text escaped for HTML, SVG and XML content and attribute values (the five predefined entities). */
export const esc = (s: unknown): string => String(s ?? '').replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

/** A plain JSON object (not null, not an array). */
export const isObj = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
