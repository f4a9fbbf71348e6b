'use client';
import { CartesianGrid, Legend, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';

type Point = { month: string; randomised: number | null; planned: number | null };

/**
 * Cumulative randomised per month against the planned line (pooled over arms). The same numbers are given as a
 * table below the chart for screen readers and for printing, so the drawing itself is hidden from them and takes no focus.
 */
export function RecruitmentChart({ points }: { points: Point[] }) {
  return (
    <figure className="flex flex-col gap-2">
      <div className="h-64 w-full" aria-hidden="true">
        <ResponsiveContainer width="100%" height="100%">
          <LineChart data={points} margin={{ top: 8, right: 16, bottom: 4, left: 0 }} accessibilityLayer={false}>
            <CartesianGrid stroke="#cfc9bc" strokeDasharray="2 4" />
            <XAxis dataKey="month" tick={{ fontSize: 11, fill: '#3b4a57' }} interval="preserveStartEnd" />
            <YAxis allowDecimals={false} tick={{ fontSize: 11, fill: '#3b4a57' }} width={36} />
            <Tooltip />
            <Legend wrapperStyle={{ fontSize: 12 }} />
            <Line type="monotone" dataKey="planned" name="Planned (cumulative)" stroke="#8f897c" strokeDasharray="6 4" dot={false} isAnimationActive={false} connectNulls />
            <Line type="monotone" dataKey="randomised" name="Randomised (cumulative)" stroke="#0f5563" strokeWidth={2} dot={{ r: 2 }} isAnimationActive={false} />
          </LineChart>
        </ResponsiveContainer>
      </div>
      <figcaption className="text-sm text-ink-soft">Cumulative randomised per month (solid) against the planned line (dashed), both arms together.</figcaption>
      <details>
        <summary className="cursor-pointer text-sm">The chart's numbers</summary>
        <table>
          <thead><tr><th scope="col">Month</th><th scope="col" className="text-right">Randomised (cumulative)</th><th scope="col" className="text-right">Planned (cumulative)</th></tr></thead>
          <tbody>{points.map((p) => <tr key={p.month}><td>{p.month}</td><td className="text-right tabular-nums">{p.randomised ?? '—'}</td><td className="text-right tabular-nums">{p.planned ?? '—'}</td></tr>)}</tbody>
        </table>
      </details>
    </figure>
  );
}
