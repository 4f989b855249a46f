/**
 * Common model railway scales and their ratios (1:ratio), for the "New layout" form.
 * Sources (REFERENCES.md): NMRA S-1.2 and S-1.3, the NMRA Large Scale Working Group report
 * (1994) for the 45 mm gauge ratios, and MOROP NEM 010 (2011).
 */
export interface ScaleChoice {
  name: string;
  ratio: number;
  /** Where the ratio comes from, shown beside the choice. */
  source: string;
}

export const COMMON_SCALES: readonly ScaleChoice[] = [
  { name: "G", ratio: 22.5, source: "45 mm gauge; NEM 010 scale II" },
  { name: "Large 1:20.3", ratio: 20.3, source: "45 mm gauge, NMRA large scale" },
  { name: "Large 1:24", ratio: 24, source: "45 mm gauge, NMRA large scale" },
  { name: "Large 1:29", ratio: 29, source: "45 mm gauge, NMRA large scale" },
  { name: "I", ratio: 32, source: "NEM 010; NMRA large scale 1:32" },
  { name: "0 (NEM)", ratio: 45, source: "NEM 010" },
  { name: "O (NMRA)", ratio: 48, source: "NMRA S-1.2" },
  { name: "S", ratio: 64, source: "NMRA S-1.2" },
  { name: "H0 (NEM)", ratio: 87, source: "NEM 010" },
  { name: "HO (NMRA)", ratio: 87.1, source: "NMRA S-1.2 (3.5 mm to 1 ft)" },
  { name: "TT", ratio: 120, source: "NEM 010" },
  { name: "N", ratio: 160, source: "NEM 010; NMRA S-1.2" },
  { name: "Z", ratio: 220, source: "NEM 010" },
];

export const CUSTOM_SCALE = "custom";

/** The list entry for a stored scale, if it is one of the common ones. */
export function findScale(scale: { name: string; ratio: number }): ScaleChoice | undefined {
  return COMMON_SCALES.find((s) => s.name === scale.name && s.ratio === scale.ratio);
}
