import { useEffect, useId, useRef, useState } from 'react';
import type OpenSeadragon from 'openseadragon';
import ChannelFilter from './viewer/ChannelFilter';
import { getLayerValues } from '../../lib/api-client/routes';
import {
  DEFAULT_HEIGHT_DISPLAY, channelTransfer, defaultChannelDisplay, heightFilterCss, isDefaultChannelDisplay, parseTint,
  setChannelPoint, storedWindow, type ChannelDisplay, type HeightDisplay,
} from './viewer/layerDisplay';
import { useOpenSeadragonViewers } from './viewer/useOpenSeadragonViewers';
import { useViewerSync } from './viewer/useViewerSync';
import { useScaleBar } from './viewer/useScaleBar';
import { useImagePointer } from './viewer/useImagePointer';
import { viewportSquareAround } from './viewer/imageCoordinates';
import { readoutText, type ReadoutLayer } from './viewer/readout';
import { markerOf, type ViewerLayer } from './viewer/viewerLayer';
import { ChannelRow, HeightRow } from './viewer/LayerControls';
import { ColourBar, LayerHost, ScaleBarLine } from './viewer/LayerStack';

export type { ViewerLayer };

interface Props {
  fieldId: string;
  layers: ViewerLayer[];
  afmPixelNm: number;
  flPixelNm: number;
}

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
