import { useEffect, useId, useRef, useState, type InputHTMLAttributes } from 'react';
import OpenSeadragon from 'openseadragon';
import ChannelFilter from './viewer/ChannelFilter';
import { getLayerValues } from '../../lib/api-client/routes';
import {
  DEFAULT_HEIGHT_DISPLAY, channelRange, channelTransfer, defaultChannelDisplay, formatCounts, heightFilterCss,
  isDefaultChannelDisplay, parseTint, setChannelPoint, storedWindow, toHex, fromHex, type ChannelDisplay, type HeightDisplay,
} from './viewer/layerDisplay';
import { useOpenSeadragonViewers } from './viewer/useOpenSeadragonViewers';
import { useViewerSync } from './viewer/useViewerSync';
import { useScaleBar } from './viewer/useScaleBar';
import { useImagePointer } from './viewer/useImagePointer';
import { viewportSquareAround } from './viewer/imageCoordinates';
import { readoutText, type ReadoutLayer } from './viewer/readout';
import { useCssVariables } from './useCssVariables';

export interface ViewerLayer {
  layer: string;
  widthPx: number;
  heightPx: number;
  display: Record<string, unknown>;
}

interface Props {
  fieldId: string;
  layers: ViewerLayer[];
  afmPixelNm: number;
  flPixelNm: number;
}

const markerOf = (l: ViewerLayer) => String(l.display.marker ?? l.layer);
const readoutLayer = (l: ViewerLayer): ReadoutLayer => ({
  layer: l.layer, name: markerOf(l), widthPx: l.widthPx, heightPx: l.heightPx,
  valuesFactor: Number(l.display.valuesFactor ?? 1), valuesWidth: Number(l.display.valuesWidth ?? 0),
});

/**
 * Deep-zoom viewer of one field: the height map or the fluorescence channels, with scale bar and read-out.
 * Each shown layer is its own OpenSeadragon viewer stacked in one box (the first leads, the others follow
 * its viewport), so each layer can carry its own display filter; channels add up on screen
 * (`mix-blend-mode: plus-lighter`), as the single-viewer `lighter` compositing did.
 */
export default function FieldViewer({ fieldId, layers, afmPixelNm, flPixelNm }: Props) {
  // ids go into CSS `url(#…)`, so keep only characters that need no escaping there
  const uid = `fv${useId().replace(/[^A-Za-z0-9_-]/g, '')}`;
  const hosts = useRef<Record<string, HTMLDivElement | null>>({});
  const values = useRef<Record<string, Float32Array>>({});
  const height = layers.find((l) => l.layer === 'height');
  const channels = layers.filter((l) => l.layer.startsWith('ch'));
  const [mode, setMode] = useState<'height' | 'fluorescence'>(height ? 'height' : 'fluorescence');
  const [visible, setVisible] = useState<Record<string, boolean>>(Object.fromEntries(channels.map((c) => [c.layer, true])));
  const [gain, setGain] = useState<Record<string, number>>(Object.fromEntries(channels.map((c) => [c.layer, 1])));
  // display only: per-layer windows and filters (the data and the read-out are not changed)
  const windows = Object.fromEntries(channels.map((c) => [c.layer, storedWindow(c.display)]));
  const [chDisplay, setChDisplay] = useState<Record<string, ChannelDisplay>>(() => Object.fromEntries(
    channels.flatMap((c) => (windows[c.layer] ? [[c.layer, defaultChannelDisplay(windows[c.layer]!)]] : [])),
  ));
  const [heightDisplay, setHeightDisplay] = useState<HeightDisplay>(DEFAULT_HEIGHT_DISPLAY);
  const [readout, setReadout] = useState<string>('Move the pointer over the image');
  const shown = mode === 'height' ? (height ? [height] : []) : channels;
  const pixelNm = mode === 'height' ? afmPixelNm : flPixelNm;
  const navHolder = useRef<HTMLDivElement>(null);

  // values for the cursor read-out (downsampled floats, fetched once per layer)
  useEffect(() => {
    const stop = new AbortController();
    for (const l of layers) {
      if (values.current[l.layer]) continue;
      // the read-out is optional: without values it shows no number under the pointer
      getLayerValues(fieldId, l.layer, null, stop.signal).then((v) => { values.current[l.layer] = v; }, () => undefined);
    }
    return () => stop.abort();
  }, [fieldId, layers]);

  // one viewer per shown layer, made again for another mode; only the leader (first) takes the pointer
  const viewers = useOpenSeadragonViewers((navElement) => {
    const elements = shown.map((l) => hosts.current[l.layer]);
    if (!elements.length || elements.some((e) => !e)) return null;
    return shown.map((l, i) => ({
      element: elements[i]!,
      tileSources: `/api/fields/${fieldId}/tiles/${l.layer}.dzi`,
      showNavigationControl: false,
      showNavigator: i === 0,
      navigatorElement: i === 0 ? navElement : undefined,
      mouseNavEnabled: i === 0,
      gestureSettingsMouse: { clickToZoom: false },
      maxZoomPixelRatio: 8,
      crossOriginPolicy: false,
      ajaxWithCredentials: true,
      immediateRender: false,
      imageSmoothingEnabled: false,
    } as OpenSeadragon.Options));
  }, `${fieldId}/${mode}`, navHolder);
  const leader = viewers[0] ?? null;
  useViewerSync(viewers);
  const scale = useScaleBar(leader, pixelNm);
  useEffect(() => setReadout('Move the pointer over the image'), [fieldId, mode]);
  useImagePointer(leader, (p) => setReadout(readoutText(p, shown.map(readoutLayer), values.current, pixelNm)));

  // a row chosen in the vesicle table: centre and zoom on it in the height map
  useEffect(() => {
    const onFocus = (e: Event) => {
      const { x, y, fieldId: f } = (e as CustomEvent<{ x: number; y: number; fieldId: string }>).detail;
      if (f !== fieldId) return;
      if (mode !== 'height') setMode('height');
      const box = leader && viewportSquareAround(leader, { x, y }, 40);
      if (!leader || !box) return;
      leader.viewport.fitBounds(box);
      hosts.current[shown[0]?.layer ?? '']?.scrollIntoView({ behavior: 'smooth', block: 'center' });
    };
    window.addEventListener('heightlight:focus-vesicle', onFocus);
    return () => window.removeEventListener('heightlight:focus-vesicle', onFocus);
  }, [fieldId, mode, leader]);

  const colourBar = (height?.display.colourBar ?? []) as { offset: number; valueNm: number; colour: string }[];
  const filterId = (layer: string) => `${uid}-${layer}-display`;

  /** The CSS filter and filter definition of one layer (none while it shows the tiles as rendered). */
  const layerLook = (l: ViewerLayer) => {
    if (l.layer === 'height') return { filter: heightFilterCss(heightDisplay), defs: null };
    const w = windows[l.layer];
    const d = chDisplay[l.layer];
    const tint = parseTint(l.display.colour);
    if (!w || !d || !tint || !tint.some((c) => c > 0) || isDefaultChannelDisplay(w, d, tint)) return { filter: 'none', defs: null };
    return { filter: `url(#${filterId(l.layer)})`, defs: <ChannelFilter key={l.layer} id={filterId(l.layer)} transfer={channelTransfer(w, d, tint)} /> };
  };
  const looks = Object.fromEntries(shown.map((l) => [l.layer, layerLook(l)]));

  return (
    <div className="space-y-3">
      <div className="flex flex-wrap gap-2 items-center">
        {height && <button type="button" className={mode === 'height' ? 'btn' : 'btn btn-quiet'} onClick={() => setMode('height')}>Height map</button>}
        {channels.length > 0 && <button type="button" className={mode === 'fluorescence' ? 'btn' : 'btn btn-quiet'} onClick={() => setMode('fluorescence')}>Fluorescence</button>}
      </div>
      <div className="relative w-full h-[560px] bg-black rounded-lg overflow-hidden isolate" data-testid="field-viewer">
        {shown.map((l, i) => (
          <LayerHost
            key={`${mode}-${l.layer}`}
            hostRef={(el) => { hosts.current[l.layer] = el; }}
            layer={l.layer}
            leader={i === 0}
            additive={mode === 'fluorescence'}
            // hidden layers stay in the stack (opacity 0) so the leader keeps its pointer events
            opacity={mode === 'fluorescence' ? (visible[l.layer] ? gain[l.layer] : 0) : 1}
            filter={looks[l.layer].filter}
          />
        ))}
        {shown.map((l) => looks[l.layer].defs)}
        <div ref={navHolder} className="absolute right-3 bottom-3 w-40 h-40 z-20 border border-white/40 bg-black" aria-label="Overview" />
        {scale && (
          <div className="absolute left-3 bottom-3 text-white text-xs z-20 pointer-events-none" data-testid="scale-bar">
            <ScaleBarLine px={scale.px} />
            <div className="mt-1 drop-shadow">{scale.label}</div>
          </div>
        )}
      </div>
      <div className="flex flex-wrap justify-between gap-4 items-center text-sm">
        <div className="font-mono text-mica-600" data-testid="readout">{readout}</div>
        {mode === 'height' && colourBar.length > 0 && (
          <div className="flex items-center gap-2" aria-label="Height colour bar">
            <span>{colourBar[0].valueNm.toFixed(1)} nm</span>
            {/* same filter as the map, so each height keeps the colour it has on screen */}
            <ColourBar filter={heightFilterCss(heightDisplay)} gradient={`linear-gradient(to right, ${colourBar.map((s) => `${s.colour} ${s.offset * 100}%`).join(', ')})`} />
            <span>{colourBar[colourBar.length - 1].valueNm.toFixed(1)} nm</span>
          </div>
        )}
      </div>
      <div className="border border-mica-200 rounded-lg bg-white divide-y divide-mica-100 text-sm" aria-label="Display of each layer">
        {mode === 'height' && height && (
          <HeightRow display={heightDisplay} onChange={setHeightDisplay} />
        )}
        {mode === 'fluorescence' && channels.map((c) => (
          <ChannelRow
            key={c.layer}
            layer={c}
            visible={visible[c.layer]}
            onVisible={(on) => setVisible({ ...visible, [c.layer]: on })}
            opacity={gain[c.layer]}
            onOpacity={(o) => setGain({ ...gain, [c.layer]: o })}
            display={chDisplay[c.layer]}
            onDisplay={(which, counts) => {
              const w = windows[c.layer];
              if (w) setChDisplay({ ...chDisplay, [c.layer]: setChannelPoint(w, chDisplay[c.layer], which, counts) });
            }}
            onColour={(colour) => {
              if (chDisplay[c.layer]) setChDisplay({ ...chDisplay, [c.layer]: { ...chDisplay[c.layer], colour } });
            }}
            onReset={() => {
              const w = windows[c.layer];
              if (w) setChDisplay({ ...chDisplay, [c.layer]: defaultChannelDisplay(w) });
              setGain({ ...gain, [c.layer]: 1 });
            }}
          />
        ))}
        <p className="px-3 py-2 text-xs text-mica-400">
          Display only: each setting changes how its layer looks on screen. The read-out{mode === 'height' ? ', the colour bar values' : ''} and all measurements use the stored values.
        </p>
      </div>
    </div>
  );
}

interface LayerHostProps {
  hostRef: (el: HTMLDivElement | null) => void;
  layer: string;
  /** The leader is on top and takes the pointer; the followers only draw. */
  leader: boolean;
  /** Channels add up on screen. */
  additive: boolean;
  opacity: number;
  /** CSS filter of the layer's display settings ('none' while it shows the tiles as rendered). */
  filter: string;
}

/** The box one layer's viewer draws in; its opacity and filter change at run time, so they go in as CSS variables. */
function LayerHost({ hostRef, layer, leader, additive, opacity, filter }: LayerHostProps) {
  const el = useRef<HTMLDivElement>(null);
  useCssVariables(el, { '--layer-opacity': opacity, '--layer-filter': filter });
  return (
    <div
      ref={(node) => {
        el.current = node;
        hostRef(node);
      }}
      className={`absolute inset-0 opacity-(--layer-opacity) filter-(--layer-filter) ${leader ? 'z-10' : 'z-[1] pointer-events-none'} ${additive ? 'mix-blend-plus-lighter' : ''}`}
      data-testid={`viewer-layer-${layer}`}
      data-layer={layer}
    />
  );
}

/** The bar of the scale bar, `px` screen pixels long. */
function ScaleBarLine({ px }: { px: number }) {
  const el = useRef<HTMLDivElement>(null);
  useCssVariables(el, { '--scale-bar-width': `${px}px` });
  return <div ref={el} className="w-(--scale-bar-width) h-1.5 bg-white rounded-sm" />;
}

/** The height colour bar: the tiles' colour stops, through the same display filter as the map. */
function ColourBar({ filter, gradient }: { filter: string; gradient: string }) {
  const el = useRef<HTMLDivElement>(null);
  useCssVariables(el, { '--colour-bar-filter': filter, '--colour-bar': gradient });
  return <div ref={el} className="w-48 h-3 rounded filter-(--colour-bar-filter) bg-(image:--colour-bar)" />;
}

/** A channel's colour dot. */
function Swatch({ colour }: { colour: string }) {
  const el = useRef<HTMLSpanElement>(null);
  useCssVariables(el, { '--swatch': colour });
  return <span ref={el} className="inline-block w-3 h-3 rounded-full bg-(--swatch)" />;
}

const ROW = 'grid grid-cols-[8rem_4.5rem_minmax(0,1fr)_minmax(0,1.3fr)_minmax(0,1.3fr)_auto] items-center gap-x-5 px-3 py-2';

/** A labelled slider with its current value (and unit) above it. */
function Slider({ label, shows, valueTestId, ...input }: { label: string; shows: string; valueTestId?: string } & InputHTMLAttributes<HTMLInputElement>) {
  return (
    <label className="block min-w-0">
      <span className="flex justify-between gap-2 text-xs text-mica-600">
        <span>{label}</span>
        <span className="tabular-nums text-mica-800" data-testid={valueTestId}>{shows}</span>
      </span>
      <input type="range" className="w-full accent-tip-600" {...input} />
    </label>
  );
}

function HeightRow({ display, onChange }: { display: HeightDisplay; onChange: (d: HeightDisplay) => void }) {
  return (
    <div className={ROW} data-testid="layer-controls-height">
      <span className="font-medium text-mica-800">Height map</span>
      <span />
      <Slider label="Brightness" shows={`${display.brightnessPct} %`} min={50} max={300} step={5} value={display.brightnessPct}
        aria-label="Brightness of the height map" onChange={(e) => onChange({ ...display, brightnessPct: Number(e.target.value) })} />
      <Slider label="Contrast" shows={`${display.contrastPct} %`} min={50} max={300} step={5} value={display.contrastPct}
        aria-label="Contrast of the height map" onChange={(e) => onChange({ ...display, contrastPct: Number(e.target.value) })} />
      <span />
      <button type="button" className="btn btn-quiet" aria-label="Reset height map display" onClick={() => onChange(DEFAULT_HEIGHT_DISPLAY)}>Reset</button>
    </div>
  );
}

interface ChannelRowProps {
  layer: ViewerLayer;
  visible: boolean;
  onVisible: (on: boolean) => void;
  opacity: number;
  onOpacity: (o: number) => void;
  display: ChannelDisplay | undefined;
  onDisplay: (which: 'black' | 'white', counts: number) => void;
  onColour: (colour: [number, number, number]) => void;
  onReset: () => void;
}

function ChannelRow({ layer, visible, onVisible, opacity, onOpacity, display, onDisplay, onColour, onReset }: ChannelRowProps) {
  const name = markerOf(layer);
  const w = storedWindow(layer.display);
  const range = w ? channelRange(w) : null;
  const tint = parseTint(layer.display.colour);
  return (
    <div className={ROW} data-testid={`layer-controls-${layer.layer}`}>
      <label className="inline-flex items-center gap-2 font-medium text-mica-800">
        <input type="checkbox" className="accent-tip-600" aria-label={`Show ${name}`} checked={visible} onChange={(e) => onVisible(e.target.checked)} />
        {name}
      </label>
      {tint && display ? (
        <label className="inline-flex items-center gap-1.5 text-xs text-mica-600" title="Display colour (screen only)">
          <input type="color" className="w-7 h-6 p-0 border border-mica-200 rounded cursor-pointer bg-white" aria-label={`Colour of ${name}`}
            value={toHex(display.colour ?? tint)} onChange={(e) => { const c = fromHex(e.target.value); if (c) onColour(c); }} />
          colour
        </label>
      ) : (
        <Swatch colour={String(layer.display.colour ?? '#fff')} />
      )}
      <Slider label="Opacity" shows={`${Math.round(opacity * 100)} %`} min={0.1} max={1} step={0.05} value={opacity}
        aria-label={`Opacity of ${name}`} onChange={(e) => onOpacity(Number(e.target.value))} />
      {range && display ? (
        <>
          <Slider label="Black at" shows={formatCounts(display.blackCounts)} valueTestId={`black-${layer.layer}`} min={range.min} max={range.max} step={range.step}
            value={display.blackCounts} aria-label={`Black level of ${name}`} onChange={(e) => onDisplay('black', Number(e.target.value))} />
          <Slider label="Full colour at" shows={formatCounts(display.whiteCounts)} valueTestId={`white-${layer.layer}`} min={range.min} max={range.max} step={range.step}
            value={display.whiteCounts} aria-label={`Full colour level of ${name}`} onChange={(e) => onDisplay('white', Number(e.target.value))} />
        </>
      ) : (
        <span className="col-span-2 text-xs text-mica-400">Levels appear once the field has been processed again.</span>
      )}
      <button type="button" className="btn btn-quiet" aria-label={`Reset display of ${name}`} onClick={onReset}>Reset</button>
    </div>
  );
}
