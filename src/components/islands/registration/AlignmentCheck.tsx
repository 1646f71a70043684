import { useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { composeAffine, invertAffine } from '../../../lib/analysis/geometry';
import { downsampledFromFull, resampleThroughAffine } from '../../../lib/analysis/geometry/resampleThroughAffine';
import { VIRIDIS_RGB } from '../../../lib/imaging/colourMapHeight';
import type { Affine } from '../../../lib/analysis/types';
import { getLayerValues } from '../../../lib/api-client/routes';
import { ApiError } from '../../../lib/api-client/http';
import { scaleBarFor } from '../viewer/scaleBar';
import { useCssVariables } from '../useCssVariables';

/** One layer's stored value read-out (`<layer>.f32`, block-averaged) and how to colour it. */
export interface CheckLayer {
  layer: string;
  label: string;
  /** Read-out size (pixels) and full pixels per read-out pixel. */
  valuesWidth: number;
  valuesHeight: number;
  valuesFactor: number;
  /** Display range: nm for the height map, counts for a channel (the same range as the tiles). */
  low: number;
  high: number;
  /** Channel tint as RGB; null draws the height map through viridis, as the height tiles are. */
  colour: [number, number, number] | null;
}

interface Props {
  fieldId: string;
  /** Current `flFromAfm` (AFM pixels → fluorescence pixels), or null while fewer than 3 pairs exist. */
  transform: Affine | null;
  afmPixelNm: number;
  height: CheckLayer | null;
  channels: CheckLayer[];
}

type Mode = 'checker' | 'blink' | 'fade';
const MODES: { id: Mode; label: string; hint: string }[] = [
  { id: 'checker', label: 'Checkerboard', hint: 'Squares alternate between the two images: edges of beads and vesicles should run on across square borders.' },
  { id: 'blink', label: 'Blink', hint: 'The two images take turns: a well-aligned feature stays put, a misaligned one jumps.' },
  { id: 'fade', label: 'Cross-fade', hint: 'Slide from the height map to the fluorescence: spots should grow out of the vesicles under them.' },
];
/** Whole numbers for a display range, without a "-0". */
const whole = (v: number) => (Math.round(v) === 0 ? '0' : v.toFixed(0));
const ZOOMS = [1, 2, 4, 8] as const;
/** The canvas width for each zoom (a share of the frame it scrolls in). */
const ZOOM_WIDTH: Record<(typeof ZOOMS)[number], string> = { 1: 'w-full', 2: 'w-[200%]', 4: 'w-[400%]', 8: 'w-[800%]' };
// "no data" stripes where the fluorescence frame does not reach (distinct from viridis and from a dark background)
const EMPTY_A = [58, 63, 76];
const EMPTY_B = [38, 41, 50];

/** Colours a value grid into RGBA; NaN pixels get diagonal stripes. */
function paint(values: Float32Array, w: number, h: number, layer: CheckLayer): Uint8ClampedArray {
  const rgba = new Uint8ClampedArray(w * h * 4);
  const span = Math.max(layer.high - layer.low, 1e-9);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const i = y * w + x;
      const v = values[i];
      const o = i * 4;
      rgba[o + 3] = 255;
      if (!Number.isFinite(v)) {
        const c = ((x + y) >> 3) & 1 ? EMPTY_A : EMPTY_B;
        rgba[o] = c[0]; rgba[o + 1] = c[1]; rgba[o + 2] = c[2];
        continue;
      }
      const t = Math.min(1, Math.max(0, (v - layer.low) / span));
      if (layer.colour) {
        rgba[o] = layer.colour[0] * t; rgba[o + 1] = layer.colour[1] * t; rgba[o + 2] = layer.colour[2] * t;
      } else {
        const k = Math.round(t * 255) * 3;
        rgba[o] = VIRIDIS_RGB[k]; rgba[o + 1] = VIRIDIS_RGB[k + 1]; rgba[o + 2] = VIRIDIS_RGB[k + 2];
      }
    }
  }
  return rgba;
}

/** Scale bar in the bottom-left corner, sized to about a fifth of the width. */
function drawScaleBar(ctx: CanvasRenderingContext2D, w: number, h: number, umPerPx: number) {
  const { px: len, label } = scaleBarFor(umPerPx, w / 5);
  const pad = Math.round(w / 40);
  const thick = Math.max(2, Math.round(w / 160));
  ctx.fillStyle = 'rgba(0,0,0,.55)';
  ctx.fillRect(pad / 2, h - pad * 2.6, len + pad, pad * 2.2);
  ctx.fillStyle = '#fff';
  ctx.fillRect(pad, h - pad - thick, len, thick);
  ctx.font = `600 ${Math.round(w / 45)}px sans-serif`;
  ctx.textBaseline = 'bottom';
  ctx.fillText(label, pad, h - pad - thick - 2);
}

/**
 * Visual check of a registration: the height map and one fluorescence channel drawn in the same (AFM)
 * frame through the current transform, as a checkerboard, a blink or a cross-fade. Uses the stored
 * value read-outs, so it shows the data at read-out resolution (display only; nothing is saved).
 */
export default function AlignmentCheck({ fieldId, transform, afmPixelNm, height, channels }: Props) {
  const canvas = useRef<HTMLCanvasElement>(null);
  const [mode, setMode] = useState<Mode>('checker');
  const [channel, setChannel] = useState(channels[0]?.layer ?? '');
  const [values, setValues] = useState<Record<string, Float32Array>>({});
  const requested = useRef(new Set<string>());
  const [error, setError] = useState<string | null>(null);
  const [squareUm, setSquareUm] = useState(1);
  const [rateHz, setRateHz] = useState(2);
  const [playing, setPlaying] = useState(true);
  const [phase, setPhase] = useState<0 | 1>(0);
  const [fade, setFade] = useState(0.5);
  const [zoom, setZoom] = useState<(typeof ZOOMS)[number]>(1);
  const frame = useRef<HTMLDivElement>(null);
  const ch = channels.find((c) => c.layer === channel) ?? null;
  // the frame keeps the shape of the read-out grid
  useCssVariables(frame, { '--frame-aspect': height ? `${height.valuesWidth} / ${height.valuesHeight}` : null });

  // read-outs of the height map and the chosen channel, fetched once each
  useEffect(() => {
    for (const l of [height, ch]) {
      if (!l || requested.current.has(l.layer)) continue;
      requested.current.add(l.layer);
      getLayerValues(fieldId, l.layer, l.valuesWidth * l.valuesHeight).then((arr) => setValues((v) => ({ ...v, [l.layer]: arr })), (e) => {
        if (e instanceof RangeError) return setError(`The stored values of the ${l.label.toLowerCase()} do not match their size; re-run the field's processing.`);
        if (e instanceof ApiError) return setError(`The values of the ${l.label.toLowerCase()} could not be loaded (${e.status}); reload the page.`);
        setError('The image values could not be loaded; check the connection and reload the page.');
      });
    }
  }, [fieldId, height, ch]);

  // both images as RGBA in the AFM read-out grid; the height map needs no resampling there
  const images = useMemo(() => {
    if (!transform || !height || !ch) return null;
    const hv = values[height.layer];
    const fv = values[ch.layer];
    if (!hv || !fv) return null;
    const w = height.valuesWidth;
    const h = height.valuesHeight;
    const afmFromGrid = invertAffine(downsampledFromFull(height.valuesFactor));
    const flGridFromGrid = composeAffine(downsampledFromFull(ch.valuesFactor), composeAffine(transform, afmFromGrid));
    const flOnGrid = resampleThroughAffine({ data: fv, width: ch.valuesWidth, height: ch.valuesHeight }, flGridFromGrid, w, h);
    return { w, h, afm: paint(hv, w, h, height), fl: paint(flOnGrid, w, h, ch) };
  }, [transform, height, ch, values]);

  useEffect(() => {
    if (mode !== 'blink' || !playing) return;
    const t = setInterval(() => setPhase((p) => (p ? 0 : 1)), 1000 / rateHz);
    return () => clearInterval(t);
  }, [mode, playing, rateHz]);

  useEffect(() => {
    const el = canvas.current;
    if (!el || !images || !height) return;
    const { w, h, afm, fl } = images;
    el.width = w;
    el.height = h;
    const ctx = el.getContext('2d');
    if (!ctx) return;
    const img = ctx.createImageData(w, h);
    const out = img.data;
    if (mode === 'blink') out.set(phase ? fl : afm);
    else if (mode === 'fade') {
      for (let i = 0; i < out.length; i++) out[i] = afm[i] * (1 - fade) + fl[i] * fade;
    } else {
      const sq = (squareUm * 1000) / afmPixelNm / height.valuesFactor;
      for (let y = 0; y < h; y++) {
        const row = Math.floor(y / sq);
        for (let x = 0; x < w; x++) {
          const src = (Math.floor(x / sq) + row) & 1 ? fl : afm;
          const o = (y * w + x) * 4;
          out[o] = src[o]; out[o + 1] = src[o + 1]; out[o + 2] = src[o + 2]; out[o + 3] = 255;
        }
      }
    }
    ctx.putImageData(img, 0, 0);
    drawScaleBar(ctx, w, h, (afmPixelNm * height.valuesFactor) / 1000);
  }, [images, mode, phase, fade, squareUm, afmPixelNm, height]);

  /** Changes the zoom around the middle of what is in view. */
  const zoomTo = (next: (typeof ZOOMS)[number]) => {
    const el = frame.current;
    if (el) {
      const k = next / zoom;
      const cx = (el.scrollLeft + el.clientWidth / 2) * k;
      const cy = (el.scrollTop + el.clientHeight / 2) * k;
      requestAnimationFrame(() => { el.scrollLeft = cx - el.clientWidth / 2; el.scrollTop = cy - el.clientHeight / 2; });
    }
    setZoom(next);
  };

  const fieldUm = height ? (height.valuesWidth * height.valuesFactor * afmPixelNm) / 1000 : 10;
  const maxSquareUm = Math.max(0.5, Math.round(fieldUm / 2 * 10) / 10);
  const hint = MODES.find((m) => m.id === mode)!.hint;
  const chLabel = ch?.label ?? 'fluorescence';

  let body: ReactNode;
  if (!height || !channels.length) body = <p className="text-mica-600">This field has no stored image values to compare (it was processed before they were kept); re-run its processing to use this check.</p>;
  else if (!transform) body = <p className="text-mica-600">The check appears once the transform is solved (3 pairs or more).</p>;
  else if (error) body = <p className="notice notice-error" role="alert">{error}</p>;
  else body = null;

  return (
    <section className="card space-y-3" data-testid="alignment-check" aria-labelledby="alignment-check-title">
      <div className="flex flex-wrap items-baseline gap-x-3">
        <h2 id="alignment-check-title" className="text-base">Check the alignment by eye</h2>
        <p className="text-xs text-mica-600">Both images in the AFM frame, the fluorescence drawn through the current transform. Display only.</p>
      </div>
      {body ?? (
        <div className="grid gap-4 md:grid-cols-[minmax(0,540px)_1fr]">
          <div className="relative">
            {/* zoomed: the canvas grows inside a frame of the same shape, which scrolls */}
            <div ref={frame} className="rounded-lg bg-black overflow-auto aspect-(--frame-aspect)" data-testid="alignment-frame">
              <canvas ref={canvas} className={`h-auto block max-w-none ${ZOOM_WIDTH[zoom]} ${zoom > 1 ? '[image-rendering:pixelated]' : ''}`} data-testid="alignment-canvas" data-mode={mode} aria-label={`${MODES.find((m) => m.id === mode)!.label} of the height map and ${chLabel}`} />
            </div>
            {!images && <p className="absolute inset-0 grid place-items-center text-sm text-white/80">Loading image values…</p>}
          </div>
          <div className="space-y-3 text-sm">
            <div className="inline-flex rounded-lg border border-mica-200 overflow-hidden" role="group" aria-label="Comparison">
              {MODES.map((m) => (
                <button key={m.id} type="button" aria-pressed={mode === m.id} onClick={() => setMode(m.id)}
                  className={`px-3 py-1.5 font-semibold ${mode === m.id ? 'bg-tip-600 text-white' : 'bg-white text-tip-700 hover:bg-tip-50'}`}>{m.label}</button>
              ))}
            </div>
            <p className="text-mica-600">{hint}</p>
            <div className="flex items-center gap-2"><span className="field-label m-0 w-32">Zoom</span>
              <div className="inline-flex rounded-lg border border-mica-200 overflow-hidden" role="group" aria-label="Zoom">
                {ZOOMS.map((z) => (
                  <button key={z} type="button" aria-pressed={zoom === z} onClick={() => zoomTo(z)}
                    className={`px-2.5 py-1 tabular-nums ${zoom === z ? 'bg-tip-600 text-white' : 'bg-white text-tip-700 hover:bg-tip-50'}`}>{z === 1 ? 'Whole field' : `${z}×`}</button>
                ))}
              </div>
            </div>
            {zoom > 1 && <p className="text-xs text-mica-600 -mt-2">Scroll the image to move around; the scale bar sits at the bottom-left of the field.</p>}
            <label className="flex items-center gap-2"><span className="field-label m-0 w-32">Fluorescence</span>
              <select className="input w-auto" value={channel} onChange={(e) => setChannel(e.target.value)}>
                {channels.map((c) => <option key={c.layer} value={c.layer}>{c.label}</option>)}
              </select>
            </label>
            {mode === 'checker' && (
              <label className="flex items-center gap-2"><span className="field-label m-0 w-32">Square size</span>
                <input type="range" min={0.2} max={maxSquareUm} step={0.1} value={squareUm} onChange={(e) => setSquareUm(Number(e.target.value))} aria-label="Square size (µm)" />
                <output className="tabular-nums whitespace-nowrap" data-testid="square-size">{squareUm.toFixed(1)} µm</output>
              </label>
            )}
            {mode === 'blink' && (
              <>
                <label className="flex items-center gap-2"><span className="field-label m-0 w-32">Rate</span>
                  <input type="range" min={0.5} max={8} step={0.5} value={rateHz} onChange={(e) => setRateHz(Number(e.target.value))} aria-label="Blink rate (Hz)" />
                  <output className="tabular-nums whitespace-nowrap" data-testid="blink-rate">{rateHz.toFixed(1)} Hz ({Math.round(1000 / rateHz)} ms each)</output>
                </label>
                <div className="flex items-center gap-2">
                  <button type="button" className="btn btn-quiet" onClick={() => setPlaying(!playing)}>{playing ? 'Pause' : 'Play'}</button>
                  <button type="button" className="btn btn-quiet" onClick={() => setPhase(phase ? 0 : 1)} disabled={playing} title="Step to the other image while paused">Switch image</button>
                </div>
                <p>Showing: <strong data-testid="blink-showing">{phase ? chLabel : 'height map'}</strong></p>
              </>
            )}
            {mode === 'fade' && (
              <label className="flex items-center gap-2"><span className="field-label m-0 w-32">Mix</span>
                <span className="text-xs text-mica-600">height</span>
                <input type="range" min={0} max={1} step={0.05} value={fade} onChange={(e) => setFade(Number(e.target.value))} aria-label="Fluorescence share (%)" />
                <span className="text-xs text-mica-600">fluor.</span>
                <output className="tabular-nums whitespace-nowrap" data-testid="fade-share">{Math.round(fade * 100)} % fluor.</output>
              </label>
            )}
            <ul className="text-xs text-mica-600 space-y-1">
              <li><LegendSwatch background="linear-gradient(90deg,#440154,#21918c,#fde725)" />height map, {whole(height!.low)} to {whole(height!.high)} nm (same colours as the left viewer)</li>
              <li><LegendSwatch background={ch?.colour ? `rgb(${ch.colour.join(',')})` : '#fff'} />{chLabel}, {whole(ch?.low ?? 0)} to {whole(ch?.high ?? 0)} counts</li>
              <li><LegendSwatch background={`repeating-linear-gradient(45deg,rgb(${EMPTY_A}),rgb(${EMPTY_A}) 2px,rgb(${EMPTY_B}) 2px,rgb(${EMPTY_B}) 4px)`} />stripes: outside the fluorescence frame (no data)</li>
            </ul>
            <p className="text-xs text-mica-400">Values at read-out resolution ({((afmPixelNm * height!.valuesFactor)).toFixed(0)} nm per pixel on the height side); the transform updates as you edit pairs.</p>
          </div>
        </div>
      )}
    </section>
  );
}

/** A legend square; its background (a colour or a gradient) is known only at run time. */
function LegendSwatch({ background }: { background: string }) {
  const el = useRef<HTMLSpanElement>(null);
  useCssVariables(el, { '--swatch': background });
  return <span ref={el} className="inline-block w-3 h-3 align-middle rounded-sm mr-1 [background:var(--swatch)]" />;
}
