/**
 * One route's distances drawn to scale: the approach detector, the shortest safe distance
 * before the signal (red where the detector sits inside it), the signal, then beyond the
 * junction the fouling point, the clearance detector and the longest train standing clear.
 */
export interface StripProps {
  route: string;
  /** Metres from the approach detector to the signal (null: not on one line). */
  approachM: number | null;
  requiredM: number | null;
  /** Beyond the signal: fouling point and clearance detector, metres from the signal. */
  foulingM: number | null;
  clearanceM: number | null;
  rearOverhangM: number;
  longestTrainM: number;
  approachId: string;
  signalId: string;
  clearanceId: string | null;
}

const W = 900;
const H = 96;
const PAD = 40;
const Y = 50;

export function PlacementStrip(p: StripProps) {
  const before = Math.max(p.approachM ?? 0, p.requiredM ?? 0, 1);
  const after = Math.max((p.foulingM ?? 0) + p.longestTrainM, p.clearanceM ?? 0, 1);
  const perM = (W - 2 * PAD) / (before + after);
  const x = (m: number) => PAD + (before + m) * perM; // 0 m is the signal; approach is negative
  const short = p.approachM !== null && p.requiredM !== null && p.approachM < p.requiredM;
  const clearShort = p.clearanceM !== null && p.foulingM !== null && p.clearanceM - p.foulingM < p.rearOverhangM;
  const tick = (m: number, label: string, color: string, above = false) => (
    <g>
      <line x1={x(m)} x2={x(m)} y1={Y - 12} y2={Y + 12} stroke={color} strokeWidth={3} />
      <text x={x(m)} y={above ? Y - 18 : Y + 28} textAnchor="middle" fontSize={12} fill={color}>
        {label}
      </text>
    </g>
  );
  return (
    <svg role="img" aria-label={`Distances of route ${p.route}${short ? ": the approach detector is too close" : ""}${clearShort ? "; the clearance detector is too near the fouling point" : ""}`} viewBox={`0 0 ${W} ${H}`} className="block h-auto w-full rounded-md bg-panel-950" data-route-strip={p.route} fontFamily='"JetBrains Mono", ui-monospace, monospace'>
      <line x1={PAD} x2={W - PAD} y1={Y} y2={Y} stroke="#3a4b5c" strokeWidth={6} strokeLinecap="round" />
      {p.requiredM !== null ? (
        <g>
          <rect x={x(-p.requiredM)} y={Y - 6} width={p.requiredM * perM} height={12} fill={short ? "#ef3b34" : "#2fcf6a"} opacity={0.35} />
          <text x={x(-p.requiredM / 2)} y={Y - 14} textAnchor="middle" fontSize={11} fill="#b5c2cf">{`needs ${p.requiredM.toFixed(2)} m`}</text>
        </g>
      ) : null}
      {p.approachM !== null ? tick(-p.approachM, `${p.approachId} ${p.approachM.toFixed(2)} m`, short ? "#ff8a80" : "#e4ebf2") : null}
      {tick(0, p.signalId, "#d9b35f", true)}
      {p.foulingM !== null ? (
        <g>
          {tick(p.foulingM, "fouling", "#f5b82e", true)}
          <rect x={x(p.foulingM)} y={Y + 8} width={p.longestTrainM * perM} height={8} rx={2} fill="#d9b35f" opacity={0.6} />
        </g>
      ) : null}
      {p.clearanceM !== null && p.clearanceId ? tick(p.clearanceM, p.clearanceId, clearShort ? "#ff8a80" : "#e4ebf2") : null}
    </svg>
  );
}
