/**
 * The default style of targets.gpkg, written to the `layer_styles` table that desktop GIS read beside a
 * GeoPackage's layers (a QGIS convention, not part of the OGC GeoPackage standard; the table is also
 * registered in gpkg_contents as an attributes table so other readers list it). Each style is given
 * twice: as OGC SLD 1.1 / Symbology Encoding 1.1 (`styleSLD`) and as a QGIS QML document (`styleQML`,
 * written from memory of that format and not checked in QGIS here).
 *
 * The rules: a target accepted in review is drawn solid in the APWA colour of its utility type; a
 * candidate nobody reviewed is drawn dashed (thinner, paler fill), so the two stay apart; a target with
 * no utility type is dark grey. Flagged (above-ground) anomalies are not in this file at all.
 */
import { APWA_COLOURS, UTILITY_TYPES, type UtilityType } from './apwa';
import type { GpkgValue } from './gpkg';
import { UNTYPED_COLOUR } from './plan-map';
import { esc as xml } from './text';

/** The columns of layer_styles, in QGIS's order (from memory of the table QGIS creates). */
export const LAYER_STYLES_COLUMNS: readonly (readonly [string, 'TEXT' | 'INTEGER'])[] = [
  ['f_table_catalog', 'TEXT'],
  ['f_table_schema', 'TEXT'],
  ['f_table_name', 'TEXT'],
  ['f_geometry_column', 'TEXT'],
  ['styleName', 'TEXT'],
  ['styleQML', 'TEXT'],
  ['styleSLD', 'TEXT'],
  ['useAsDefault', 'INTEGER'],
  ['description', 'TEXT'],
  ['owner', 'TEXT'],
  ['ui', 'TEXT'],
  ['update_time', 'TEXT'],
];

interface StyleRule {
  name: string;
  decision: 'accepted' | 'candidate';
  /** null: targets with no utility type. */
  utilityType: UtilityType | null;
  colour: string;
}

/** One rule per review state and utility type (white, proposed excavation, drawn grey: white is invisible on a map). */
export function styleRules(): StyleRule[] {
  const types: (UtilityType | null)[] = [...UTILITY_TYPES.filter((u) => u !== 'unknown'), null];
  const rules: StyleRule[] = [];
  for (const decision of ['accepted', 'candidate'] as const) {
    for (const u of types) {
      const hex = u === null ? UNTYPED_COLOUR : APWA_COLOURS[u].hex === '#ffffff' ? '#bdbdbd' : APWA_COLOURS[u].hex;
      rules.push({ name: `${decision === 'accepted' ? 'accepted' : 'candidate (not reviewed)'}: ${u ?? 'type not known'}`, decision, utilityType: u, colour: hex });
    }
  }
  return rules;
}


function sldFilter(r: StyleRule): string {
  const eq = (p: string, v: string) => `<ogc:PropertyIsEqualTo><ogc:PropertyName>${p}</ogc:PropertyName><ogc:Literal>${xml(v)}</ogc:Literal></ogc:PropertyIsEqualTo>`;
  const type = r.utilityType === null ? '<ogc:PropertyIsNull><ogc:PropertyName>utilityType</ogc:PropertyName></ogc:PropertyIsNull>' : eq('utilityType', r.utilityType);
  return `<ogc:Filter><ogc:And>${eq('decision', r.decision)}${type}</ogc:And></ogc:Filter>`;
}

/** The SLD 1.1 document of a layer. Widths in pixels (SE's default unit). */
export function targetsSld(layerName: string): string {
  const rules = styleRules()
    .map((r) => {
      const accepted = r.decision === 'accepted';
      const stroke = `<se:Stroke><se:SvgParameter name="stroke">${r.colour}</se:SvgParameter><se:SvgParameter name="stroke-width">${accepted ? 3 : 2}</se:SvgParameter>${accepted ? '' : '<se:SvgParameter name="stroke-dasharray">6 3</se:SvgParameter>'}</se:Stroke>`;
      return (
        `<se:Rule><se:Name>${xml(r.name)}</se:Name>${sldFilter(r)}` +
        `<se:PolygonSymbolizer><se:Fill><se:SvgParameter name="fill">${r.colour}</se:SvgParameter><se:SvgParameter name="fill-opacity">${accepted ? 0.35 : 0.15}</se:SvgParameter></se:Fill>${stroke}</se:PolygonSymbolizer>` +
        `<se:LineSymbolizer>${stroke}</se:LineSymbolizer>` +
        `<se:PointSymbolizer><se:Graphic><se:Mark><se:WellKnownName>circle</se:WellKnownName><se:Fill><se:SvgParameter name="fill">${r.colour}</se:SvgParameter></se:Fill>${stroke}</se:Mark><se:Size>8</se:Size></se:Graphic></se:PointSymbolizer></se:Rule>`
      );
    })
    .join('');
  return (
    '<?xml version="1.0" encoding="UTF-8"?>' +
    '<StyledLayerDescriptor version="1.1.0" xmlns="http://www.opengis.net/sld" xmlns:se="http://www.opengis.net/se" xmlns:ogc="http://www.opengis.net/ogc" xmlns:xlink="http://www.w3.org/1999/xlink" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="http://www.opengis.net/sld http://schemas.opengis.net/sld/1.1.0/StyledLayerDescriptor.xsd">' +
    `<NamedLayer><se:Name>${xml(layerName)}</se:Name><UserStyle><se:Name>lamina targets</se:Name><se:Description><se:Title>Lamina targets by review state and APWA colour</se:Title><se:Abstract>Accepted targets solid, candidates dashed; radar finds are not a locate.</se:Abstract></se:Description>` +
    `<se:FeatureTypeStyle>${rules}</se:FeatureTypeStyle></UserStyle></NamedLayer></StyledLayerDescriptor>`
  );
}

const rgba = (hex: string, a = 255) => `${Number.parseInt(hex.slice(1, 3), 16)},${Number.parseInt(hex.slice(3, 5), 16)},${Number.parseInt(hex.slice(5, 7), 16)},${a}`;

/**
 * The QML document of a layer: a rule-based renderer with line symbols (linear targets, the common
 * case; compact targets' polygons get the same rules through their outline).
 */
export function targetsQml(): string {
  const rules = styleRules();
  const filter = (r: StyleRule) => `"decision" = '${r.decision}' AND ${r.utilityType === null ? '"utilityType" IS NULL' : `"utilityType" = '${r.utilityType}'`}`;
  const symbols = rules
    .map(
      (r, i) =>
        `<symbol type="line" name="${i}" alpha="1" clip_to_extent="1" force_rhr="0"><layer class="SimpleLine" enabled="1" locked="0" pass="0"><Option type="Map">` +
        `<Option name="line_color" value="${rgba(r.colour)}" type="QString"/><Option name="line_style" value="${r.decision === 'accepted' ? 'solid' : 'dash'}" type="QString"/>` +
        `<Option name="line_width" value="${r.decision === 'accepted' ? 0.8 : 0.5}" type="QString"/><Option name="line_width_unit" value="MM" type="QString"/></Option></layer></symbol>`,
    )
    .join('');
  return (
    "<!DOCTYPE qgis PUBLIC 'http://mrcc.com/qgis.dtd' 'SYSTEM'>" +
    '<qgis version="3.28.0" styleCategories="Symbology"><renderer-v2 type="RuleRenderer" symbollevels="0" enableorderby="0" forceraster="0">' +
    `<rules key="{lamina-root}">${rules.map((r, i) => `<rule key="{lamina-${i}}" filter="${xml(filter(r))}" label="${xml(r.name)}" symbol="${i}"/>`).join('')}</rules>` +
    `<symbols>${symbols}</symbols></renderer-v2></qgis>`
  );
}

/** The rows of layer_styles for the given layers (each its default style). */
export function layerStylesRows(layers: string[], updateTime: string): GpkgValue[][] {
  const qml = targetsQml();
  return layers.map((name) => ['', '', name, 'geom', 'lamina targets', qml, targetsSld(name), 1, 'Accepted targets solid in their APWA colour, candidates dashed', '', '', updateTime]);
}
