/**
 * The data object the HTML report embeds (id `plx-data`), as the server writes it
 * (src/report/html/view-model.ts) and the client script reads it (report.ts). Global
 * declarations, so the client stays a plain script with no imports.
 */

/** One summary row of a configuration: per metric [mean, lo, hi, n, pooled, pooled lo, pooled hi, smallest detectable change of the mean]. */
interface PlxSummaryRow {
  label: string;
  n_pairs: number;
  n_units: number;
  unit: 'pair' | 'group';
  n_failed: number;
  m: Record<string, (number | null)[]>;
  /** Whole regions with depth: the usable range [R (m), lo, hi, holds: to | beyond | nowhere]. */
  usable: [number, number | null, number | null, string] | null;
}

/** Depth error by distance of one configuration (view-model.ts depthView). */
interface PlxDepthView {
  label: string;
  /** Pooled epe of the region (px); null without a valid prediction. */
  epe: number | null;
  /** Fine-bin centres (m). */
  z: number[];
  /** Measured mean |Zp - Zt| per bin (m). */
  measured: (number | null)[];
  /** Mean Zt^2 / (f B) per bin (m per px): times a disparity error gives the depth error it predicts. */
  perPx: (number | null)[];
  /** Pixels with a true depth per bin. */
  pixels: number[];
}

interface PlxFigureView {
  coverage: number | null;
  epe: number | null;
  rates: (number | null)[];
}

interface PlxPairJobView {
  label: string;
  status: 'ok' | 'failed';
  error: string | null;
  time_ms: number | null;
  disp: string | null;
  err: string | null;
  fig: Record<'known' | 'visible', PlxFigureView>;
}

interface PlxPairView {
  dataset: string;
  pair: string;
  scale: [number, number] | null;
  /** Thumbnail width and height (px). */
  size: [number, number] | null;
  left: string | null;
  truth: string | null;
  regions: string | null;
  note: string | null;
  jobs: PlxPairJobView[];
}

/** Everything but the pair views, which are written one at a time after it. */
interface PlxReportHead {
  thresholds: number[];
  rateNames: string[];
  /** Built-in regions, then the manifests' named regions. */
  regions: string[];
  /** Depth band labels, nearest first (empty without a camera). */
  bands: string[];
  /** The usable range's rule, e.g. depth_over5pct<=10. */
  usableRule: string;
  metrics: string[];
  units: Record<string, string>;
  headings: Record<string, string>;
  better: Record<string, 'lower' | 'higher' | 'abs'>;
  pooled: Record<string, boolean>;
  level: number;
  datasets: string[];
  configs: string[];
  /** summary[dataset][tag or ''][slice key: region, or region@band] = one row per configuration. */
  summary: Record<string, Record<string, Record<string, PlxSummaryRow[]>>>;
  dispMap: string;
  dispColors: string[];
  errMap: string;
  errColors: string[];
  errorClip: number;
  noTruth: string;
  regionKeys: [string, string][];
  /** Colours of configurations in charts, in order (colour-blind safe). */
  configColors: string[];
  /** The ranking's default order: a bad-pixel rate (missing answers count as errors), lowest first. */
  rankBy: string;
  /** Shares (0-1) of the sparsification curves, from all predictions down. */
  shares: number[];
  /** sparsify[dataset][region] = per configuration with confidence: mean over pairs of its curves (epe, px). */
  sparsify: Record<string, Record<string, PlxSparsifyView[]>>;
  /** subpixel[dataset][region] = per configuration: its sub-pixel figures over the pairs. */
  subpixel: Record<string, Record<string, PlxSubpixelView[]>>;
  /** flicker[dataset][region] = per configuration: [frame, mean flicker over the dataset's sequences at that frame]. */
  flicker: Record<string, Record<string, { label: string; points: [number, number][] }[]>>;
  /** depth[dataset][region] = per configuration: its depth error by distance. */
  depth: Record<string, Record<string, PlxDepthView[]>>;
  /** Camera-fault conditions (view-model.ts conditionsView); empty lists when the run has none. */
  conditions: PlxConditionsView;
}

/** Each configuration label's matcher and condition, the kinds present, and the breaking points. */
interface PlxConditionsView {
  /** One per configuration label: kind and strength null under clean. */
  labels: { label: string; matcher: string; condition: string; kind: string | null; strength: number | null }[];
  /** Kinds present, in catalogue order. */
  kinds: { id: string; unit: string; what: string; neutral: number }[];
  /** The breaking point's rule, region/metric:amount. */
  rule: string;
  breaking: { matcher: string; dataset: string; kind: string; strength: number | null; lo: number | null; hi: number | null; strongest: number; pairs: number }[];
}

/** Mean over pairs of a configuration's sub-pixel figures (src/metrics/subpixel.ts). */
interface PlxSubpixelView {
  label: string;
  lock: number;
  /** Predictions per fractional-part bin, summed over pairs. */
  hist: number[];
  /** Mean |error| per bin of the truth's fractional part (mean over pairs with that bin). */
  err: (number | null)[];
}

interface PlxSparsifyView {
  label: string;
  pairs: number;
  conf: number[];
  oracle: number[];
}

interface PlxReportData extends PlxReportHead {
  pairs: PlxPairView[];
}
