'use client';
import { CartesianGrid, ErrorBar, Scatter, ScatterChart, Tooltip, XAxis, YAxis, ZAxis } from 'recharts';
import { formatCI, formatNumber } from '@/lib/report/format';

type Arm = { code: string; label: string };
type Summary = { arm: string; n: number; mean: number | null; meanCI95: [number, number] | null };

// Colours from the design tokens (tailwind.config.ts): individual values in a soft ink, the mean in the glide accent.
const POINT = '#5c6b78';
const MEAN = '#0f5563';

/** A deterministic horizontal spread for the points of one arm, so the same data always draw the same chart. */
const spread = (i: number) => (((i * 0.618034) % 1) - 0.5) * 0.36;

/**
 * The primary outcome by arm: every participant's value as a point, and the arm's mean with its 95 % t interval.
 * The figure is a picture of the table above it; the numbers are in the table and in the text alternative.
 */
export function PrimaryChart({ arms, points, byArm, unit = '%' }: { arms: Arm[]; points: { arm: string; value: number }[]; byArm: Summary[]; unit?: string }) {
  const index = new Map(arms.map((a, i) => [a.code, i]));
  const counters = new Map<string, number>();
  const dots = points.map((p) => {
    const k = counters.get(p.arm) ?? 0;
    counters.set(p.arm, k + 1);
    return { x: (index.get(p.arm) ?? 0) + spread(k), y: p.value, arm: p.arm };
  });
  const means = byArm
    .filter((s) => s.mean !== null)
    .map((s) => ({
      x: index.get(s.arm) ?? 0,
      y: s.mean as number,
      arm: s.arm,
      // ErrorBar takes distances below and above the mean.
      err: s.meanCI95 ? [(s.mean as number) - s.meanCI95[0], s.meanCI95[1] - (s.mean as number)] : [0, 0],
      ci: s.meanCI95,
    }));
  const label = (x: number) => arms[Math.round(x)]?.label ?? '';
  const alt = byArm
    .map((s) => `${arms[index.get(s.arm) ?? 0]?.label ?? s.arm}: n = ${s.n}, mean ${formatNumber(s.mean, 1)} ${unit} (95 % CI ${formatCI(s.meanCI95, 1)})`)
    .join('; ');
  return (
    <figure className="flex flex-col gap-2">
      <div role="img" aria-label={`Primary outcome by arm. ${alt}`} data-testid="primary-chart">
        <ScatterChart width={640} height={340} margin={{ top: 10, right: 20, bottom: 20, left: 10 }}>
          <CartesianGrid stroke="#cfc9bc" strokeDasharray="3 3" />
          <XAxis type="number" dataKey="x" domain={[-0.5, arms.length - 0.5]} ticks={arms.map((_, i) => i)} tickFormatter={label} allowDecimals={false} name="Arm" />
          <YAxis type="number" dataKey="y" name="Value" unit={` ${unit}`} width={70} />
          <ZAxis range={[36, 36]} />
          <Tooltip
            cursor={false}
            formatter={(v, name) => (name === 'Value' ? `${formatNumber(Number(v), 1)} ${unit}` : label(Number(v)))}
          />
          <Scatter name="Participants" data={dots} fill={POINT} fillOpacity={0.55} isAnimationActive={false} />
          <Scatter name="Mean with 95 % CI" data={means} fill={MEAN} shape="diamond" isAnimationActive={false}>
            <ErrorBar dataKey="err" direction="y" width={14} stroke={MEAN} strokeWidth={2} isAnimationActive={false} />
          </Scatter>
        </ScatterChart>
      </div>
      <figcaption className="text-sm text-ink-soft">
        Grey points: individual participants (spread sideways so they do not overlap). Diamonds with bars: mean and 95 % confidence interval of each arm. {alt}.
      </figcaption>
    </figure>
  );
}
