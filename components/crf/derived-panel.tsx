'use client';

type TamRow = { hand: string; finger: string; tam: number | null; tam_pct_contralateral: number | null; grade: string | null };
type Scores = { tam_by_finger?: TamRow[]; quickdash_score?: number | null; grip_ratio_pct?: number | null };

const fmt = (v: number | null | undefined, dp = 1) => (v === null || v === undefined ? '—' : v.toFixed(dp));

/** Items computed on the server, shown read-only. */
export function DerivedPanel({ derived }: { derived: Record<string, unknown> }) {
  const entries = Object.entries(derived);
  if (!entries.length) return null;
  return (
    <section className="panel border-glide" aria-labelledby="derived-h">
      <h2 id="derived-h" className="mb-2 text-base">Calculated by Excursion <span className="tag ml-1">read-only</span></h2>
      {entries.map(([k, v]) => {
        if (k === 'derived_scores' && v && typeof v === 'object') {
          const s = v as Scores;
          return (
            <div key={k} className="flex flex-col gap-2">
              {s.tam_by_finger && s.tam_by_finger.length > 0 && (
                <table>
                  <thead><tr><th scope="col">Finger</th><th scope="col">TAM (°)</th><th scope="col">TAM % of other hand</th><th scope="col">Grade</th></tr></thead>
                  <tbody>
                    {s.tam_by_finger.map((r) => (
                      <tr key={`${r.hand}-${r.finger}`}>
                        <td>{r.hand} {r.finger}</td>
                        <td className="tabular-nums">{fmt(r.tam, 0)}</td>
                        <td className="tabular-nums">{fmt(r.tam_pct_contralateral)}</td>
                        <td>{r.grade ?? '—'}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              )}
              <p className="text-sm">QuickDASH <strong className="tabular-nums">{fmt(s.quickdash_score)}</strong> · grip, injured hand as % of the other <strong className="tabular-nums">{fmt(s.grip_ratio_pct)}</strong></p>
              <p className="text-xs text-ink-faint">Grades: excellent ≥ 100 %, good &gt; 75 %, fair &gt; 50 %, otherwise poor (against 260° when the other hand&apos;s finger was not measured). For research outcome reporting, not clinical decisions.</p>
            </div>
          );
        }
        return <p key={k} className="text-sm">{k.replace(/_/g, ' ')}: <strong>{typeof v === 'object' ? JSON.stringify(v) : String(v)}</strong></p>;
      })}
    </section>
  );
}
