import { gripRatio, quickDash, roundTo, tamGrade, tamPercent, totalActiveMotion, type TamBands } from '@/lib/scoring';

type Row = { hand: string; finger: string; mcp_flexion: number; pip_flexion: number; dip_flexion: number; mcp_ext_deficit: number; pip_ext_deficit: number; dip_ext_deficit: number };

const tamOf = (r: Row) =>
  totalActiveMotion({ mcpFlexion: r.mcp_flexion, pipFlexion: r.pip_flexion, dipFlexion: r.dip_flexion, mcpExtensionDeficit: r.mcp_ext_deficit, pipExtensionDeficit: r.pip_ext_deficit, dipExtensionDeficit: r.dip_ext_deficit });
const complete = (r: Partial<Row>): r is Row =>
  ['mcp_flexion', 'pip_flexion', 'dip_flexion', 'mcp_ext_deficit', 'pip_ext_deficit', 'dip_ext_deficit'].every((k) => typeof (r as Record<string, unknown>)[k] === 'number');
const trials = (v: unknown) => (Array.isArray(v) ? v.filter((x): x is number => typeof x === 'number') : []);

/**
 * The follow-up's derived scores, computed on the server only. The injured hand and fingers come from the
 * injury and operation form; without it, every measured finger gets its TAM and no comparison.
 */
export function deriveFollowUp(d: Record<string, unknown>, operation: Record<string, unknown> | null, bands?: TamBands) {
  const rows = (Array.isArray(d.goniometry) ? d.goniometry : []) as Partial<Row>[];
  const injuredHand = typeof operation?.hand === 'string' ? operation.hand : null;
  const injuredFingers = Array.isArray(operation?.fingers) ? (operation!.fingers as { finger?: string }[]).map((f) => f.finger) : null;
  const tam_by_finger = [];
  for (const r of rows) {
    if (!complete(r)) continue;
    const injured = injuredHand ? r.hand === injuredHand && (!injuredFingers || injuredFingers.includes(r.finger)) : true;
    if (!injured) continue;
    const tam = tamOf(r);
    let pct: number | null = null;
    let grade: string | null = null;
    if (injuredHand) {
      const other = rows.find((x) => x.finger === r.finger && x.hand !== r.hand && complete(x)) as Row | undefined;
      // Against the normal 260° when the other hand's finger was not measured (see lib/scoring).
      pct = tamPercent(tam, other ? tamOf(other) : null);
      grade = tamGrade(pct, bands);
      pct = roundTo(pct, 2);
    }
    tam_by_finger.push({ hand: r.hand, finger: r.finger, tam, tam_pct_contralateral: pct, grade });
  }
  const qd = Array.isArray(d.quickdash) ? quickDash(d.quickdash as (number | null)[]) : null;
  let grip: number | null = null;
  if (injuredHand) {
    const affected = trials(injuredHand === 'right' ? d.grip_right_kg : d.grip_left_kg);
    const unaffected = trials(injuredHand === 'right' ? d.grip_left_kg : d.grip_right_kg);
    if (affected.length && unaffected.length && unaffected.some((x) => x > 0)) grip = roundTo(gripRatio(affected, unaffected), 2);
  }
  return { tam_by_finger, quickdash_score: qd === null ? null : roundTo(qd, 2), grip_ratio_pct: grip };
}
