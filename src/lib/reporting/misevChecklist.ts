/**
 * A reporting checklist for a study, filled from what Heightlight recorded. Items follow the
 * proposed checklist fields in docs/references.md §8, which draw on MISEV2018 (Théry et al.
 * 2018, J Extracell Vesicles 7:1535750), MISEV2023 (Welsh et al. 2024, J Extracell Vesicles
 * 13:e12404) and MIFlowCyt-EV (Welsh et al. 2020, J Extracell Vesicles 9:1713526).
 */

/** What the study recorded (as read by `getChecklistInput` in src/lib/db/queries/results.ts). */
export interface ChecklistInput {
  readonly panel: readonly { channelIndex: number; marker: string; antibodyClone: string; fluorophore: string; excitationNm: number | null; emissionNm: number | null }[];
  readonly samples: readonly { code: string; controlKind: string; source: string; isolationMethod: string; substrate: string; dilution: string }[];
  readonly fields: {
    readonly fields: number;
    readonly media: readonly string[];
    readonly scanModes: readonly string[];
    readonly withAfmPixel: number;
    readonly withFlPixel: number;
    readonly withTipRadius: number;
    readonly withNa: number;
    readonly withExposure: number;
    readonly withEmission: number;
    readonly afmPixelMinNm: number | null;
    readonly afmPixelMaxNm: number | null;
    readonly flPixelMinNm: number | null;
    readonly flPixelMaxNm: number | null;
  };
  /** Settings of the current link runs (thresholds and how they were set). */
  readonly linkSettings: readonly Record<string, unknown>[];
  readonly registrations: { registered: number; minFiducials: number | null; maxFreNm: number | null; withTre: number };
  readonly releasedSamples: number;
}

/** recorded: all there; partial: some samples/fields/channels lack it; missing: nothing recorded; outside: Heightlight does not record it. */
export type ChecklistStatus = 'recorded' | 'partial' | 'missing' | 'outside';

export interface ChecklistItem {
  readonly id: string;
  readonly title: string;
  readonly status: ChecklistStatus;
  /** What was found, or what to add. */
  readonly detail: string;
  /** The guideline the item comes from. */
  readonly source: string;
}

const MISEV18 = 'MISEV2018 (Théry et al. 2018)';
const MISEV23 = 'MISEV2023 (Welsh et al. 2024)';
const MIFLOW = 'MIFlowCyt-EV (Welsh et al. 2020)';
/** Tetraspanins and other transmembrane/GPI-anchored EV proteins named by MISEV2018 (category 1). */
const TRANSMEMBRANE = /^(cd9|cd63|cd81|cd82|cd37|cd53|itg\w*|integrin.*|mfge8|lamp\d?|cd47|cd55|cd59)$/i;
/** Expected contaminants / non-EV markers named by MISEV2018 (calnexin, GRP94, histones, Argonaute), and ApoA1/albumin. */
const NON_EV = /^(calnexin|canx|grp94|hsp90b1|histone.*|h\d|ago\d?|argonaute.*|apoa1|albumin|alb|gm130)$/i;

function coverage(have: number, total: number, what: string): { status: ChecklistStatus; detail: string } {
  if (total === 0) return { status: 'missing', detail: `No ${what} recorded yet.` };
  if (have === total) return { status: 'recorded', detail: `Recorded for all ${total}.` };
  if (have === 0) return { status: 'missing', detail: `Not recorded for any of the ${total}.` };
  return { status: 'partial', detail: `Recorded for ${have} of ${total}; add it for the other ${total - have}.` };
}

const fmtRange = (lo: number | null, hi: number | null) =>
  lo === null || hi === null ? '' : lo === hi ? `${lo.toPrecision(3)} nm/px` : `${lo.toPrecision(3)}–${hi.toPrecision(3)} nm/px`;

/**
 * Builds the study's reporting checklist: one item per guideline point, each marked recorded,
 * partial, missing, or outside what the tool records.
 *
 * @param input - what the study recorded
 * @returns the checklist items in guideline order
 */
export function misevChecklist(input: ChecklistInput): ChecklistItem[] {
  const { panel, samples, fields, linkSettings, registrations } = input;
  const items: ChecklistItem[] = [];
  const nS = samples.length;

  const withSource = samples.filter((s) => s.source.trim() !== '').length;
  const withDilution = samples.filter((s) => s.dilution.trim() !== '').length;
  const src = coverage(withSource, nS, 'samples');
  items.push({
    id: 'source', title: 'Sample source and amount', source: MISEV18,
    status: src.status === 'recorded' ? 'partial' : src.status,
    detail: `Source: ${src.detail} Dilution recorded for ${withDilution} of ${nS}. The starting amount (volume, cell number or mass) is not a Heightlight field: report it in the methods.`,
  });

  const iso = coverage(samples.filter((s) => s.isolationMethod.trim() !== '').length, nS, 'samples');
  const methods = [...new Set(samples.map((s) => s.isolationMethod.trim()).filter(Boolean))];
  items.push({ id: 'separation', title: 'Separation (isolation) method', source: MISEV18, status: iso.status, detail: `${iso.detail}${methods.length ? ` Methods: ${methods.join('; ')}.` : ''}` });

  items.push({
    id: 'quantification', title: 'Particle concentration and a second quantifier', source: MISEV18, status: 'outside',
    detail: 'Heightlight counts vesicles per imaged field, not per volume. Report the particle concentration and a second global measure (e.g. protein or lipid) with their ratio.',
  });

  const sub = coverage(samples.filter((s) => s.substrate.trim() !== '').length, nS, 'samples');
  items.push({ id: 'substrate', title: 'Substrate', source: `${MISEV23} (a field this product proposes)`, status: sub.status, detail: sub.detail });

  items.push({
    id: 'medium', title: 'Imaging medium (air or liquid)', source: `${MISEV23} (a field this product proposes)`,
    status: fields.fields === 0 ? 'missing' : 'recorded',
    detail: fields.fields === 0 ? 'No fields imaged yet.' : `Media: ${fields.media.join(', ')}.`,
  });

  const afmParts = [fields.withAfmPixel, fields.withTipRadius, fields.scanModes.length ? fields.fields : 0];
  const afmHave = Math.min(...afmParts);
  const afm = coverage(afmHave, fields.fields, 'fields');
  items.push({
    id: 'afm', title: 'AFM settings: mode, tip radius, scan size, pixel size', source: MISEV23, status: afm.status,
    detail: `${afm.detail} Pixel size on ${fields.withAfmPixel}, tip radius on ${fields.withTipRadius} field(s)${fields.scanModes.length ? `; modes: ${fields.scanModes.join(', ')}` : '; no scan mode recorded'}. ${fmtRange(fields.afmPixelMinNm, fields.afmPixelMaxNm)} Setpoint and line rate are not recorded: report them in the methods.`.trim(),
  });

  const flHave = Math.min(fields.withFlPixel, fields.withNa, fields.withExposure, fields.withEmission);
  const fl = coverage(flHave, fields.fields, 'fields');
  items.push({
    id: 'fluorescence', title: 'Fluorescence imaging: NA, pixel size, wavelengths, exposure', source: MISEV23, status: fl.status,
    detail: `${fl.detail} Pixel size on ${fields.withFlPixel}, NA on ${fields.withNa}, exposure on ${fields.withExposure}, emission wavelengths on ${fields.withEmission} field(s). ${fmtRange(fields.flPixelMinNm, fields.flPixelMaxNm)}`.trim(),
  });

  const abHave = panel.filter((c) => c.antibodyClone.trim() !== '' && c.fluorophore.trim() !== '').length;
  const ab = coverage(abHave, panel.length, 'marker channels');
  items.push({
    id: 'antibodies', title: 'Antibodies per channel: clone and fluorophore', source: MIFLOW, status: ab.status,
    detail: `${ab.detail}${panel.length ? ` Panel: ${panel.map((c) => `${c.marker} (${c.antibodyClone || 'clone?'}, ${c.fluorophore || 'dye?'})`).join(', ')}.` : ''} Concentration and lot are not recorded: report them in the methods.`,
  });

  const kinds = new Set(samples.map((s) => s.controlKind));
  const hasIsotype = kinds.has('isotype') || kinds.has('secondary_only');
  const hasBuffer = kinds.has('buffer_only');
  const controlCount = samples.filter((s) => s.controlKind !== 'none').length;
  items.push({
    id: 'controls', title: 'Controls: isotype or secondary-only; buffer with antibody, no EVs', source: MIFLOW,
    status: hasIsotype && hasBuffer ? 'recorded' : hasIsotype || hasBuffer ? 'partial' : 'missing',
    detail: `${controlCount} control sample(s). Isotype/secondary-only: ${hasIsotype ? 'yes' : 'missing'}. Buffer + antibody without EVs: ${hasBuffer ? 'yes' : 'missing'}. Unstained and detergent-lysed EVs are not a control kind here: note them in the sample notes.`,
  });

  const withThreshold = linkSettings.filter((s) => s.thresholdCountsByMarker !== undefined || s.thresholds !== undefined).length;
  const withMethod = linkSettings.filter((s) => typeof (s.thresholdMethod ?? s.thresholdRule ?? s.positivityRule) === 'string').length;
  const thr = coverage(Math.min(withThreshold, withMethod), linkSettings.length, 'linked fields');
  items.push({
    id: 'thresholds', title: 'Positivity rule and threshold per channel', source: MISEV23, status: thr.status,
    detail: `${thr.detail} Thresholds on ${withThreshold} and the rule that set them on ${withMethod} of ${linkSettings.length} current link run(s).`,
  });

  const reg = coverage(registrations.registered, fields.fields, 'fields');
  items.push({
    id: 'registration', title: 'Registration: fiducials, FRE, TRE estimate', source: 'Fitzpatrick, West & Maurer 1998, IEEE TMI 17(5) (a field this product proposes)',
    status: reg.status === 'recorded' && registrations.withTre < registrations.registered ? 'partial' : reg.status,
    detail: `${reg.detail}${registrations.registered ? ` Fewest fiducials: ${registrations.minFiducials}; largest FRE: ${registrations.maxFreNm === null ? '–' : `${registrations.maxFreNm.toFixed(1)} nm`}; TRE on ${registrations.withTre} of ${registrations.registered}.` : ''}`,
  });

  items.push({
    id: 'software', title: 'Software version and parameters', source: MISEV23, status: linkSettings.length ? 'recorded' : 'missing',
    detail: linkSettings.length ? 'Link-run settings are stored with every release; cite the Heightlight version in the methods.' : 'No linked fields yet.',
  });

  const tm = panel.filter((c) => TRANSMEMBRANE.test(c.marker.trim())).map((c) => c.marker);
  const neg = panel.filter((c) => NON_EV.test(c.marker.trim())).map((c) => c.marker);
  items.push({
    id: 'markers', title: '≥ 1 transmembrane EV marker; a non-EV marker when purity is claimed', source: MISEV18,
    status: tm.length && neg.length ? 'recorded' : tm.length ? 'partial' : 'missing',
    detail: `Transmembrane: ${tm.length ? tm.join(', ') : 'none in the panel'}. Non-EV / contaminant marker: ${neg.length ? neg.join(', ') : 'none in the panel (needed only for purity claims; may be shown by another method)'}.`,
  });

  items.push({
    id: 'counts', title: 'Numbers of vesicles per sample (all and positive) with 95% CI', source: 'Newcombe 1998, Stat Med 17:857–872 (a field this product proposes)',
    status: input.releasedSamples === 0 ? 'missing' : input.releasedSamples === nS ? 'recorded' : 'partial',
    detail: `Released for ${input.releasedSamples} of ${nS} sample(s), each with a 95% interval that allows for the spread between its fields (Wilson on Kish's effective number of vesicles).`,
  });
  return items;
}
