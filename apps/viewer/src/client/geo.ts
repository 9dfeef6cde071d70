import proj4 from 'proj4';

export interface GridGeo {
  /** Top-left corner of the top-left cell, site CRS units. */
  originX: number;
  originY: number;
  /** Cell size in x and y (y positive), site CRS units. */
  resX: number;
  resY: number;
  width: number;
  height: number;
}

/**
 * The four corners of a north-up grid reprojected from the site CRS to WGS84, in the order a deck.gl
 * BitmapLayer takes them: bottom-left, top-left, top-right, bottom-right, each [lon, lat].
 */
export function gridCornersWgs84(g: GridGeo, siteProj4: string): [number, number][] {
  const t = proj4(siteProj4, 'EPSG:4326');
  const x0 = g.originX;
  const x1 = g.originX + g.width * g.resX;
  const y1 = g.originY;
  const y0 = g.originY - g.height * g.resY;
  return [
    [x0, y0],
    [x0, y1],
    [x1, y1],
    [x1, y0],
  ].map((p) => t.forward(p as [number, number]) as [number, number]);
}

/** Planar distance in metres between two lon/lat points (equirectangular; fine over a site). */
export function metresBetween(a: [number, number], b: [number, number]): number {
  const k = Math.cos((((a[1] + b[1]) / 2) * Math.PI) / 180);
  return Math.hypot((a[0] - b[0]) * 111_320 * k, (a[1] - b[1]) * 110_574);
}
