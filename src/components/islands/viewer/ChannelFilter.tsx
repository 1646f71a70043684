import type { ChannelTransfer } from './layerDisplay';

/**
 * An SVG filter that re-windows and re-colours one tinted fluorescence layer (see `channelTransfer`). Referenced
 * from that layer's element with `filter: url(#id)`; sRGB so the linear stages act on the tile's
 * own 8-bit values, as the transfer assumes.
 */
export default function ChannelFilter({ id, transfer }: { id: string; transfer: ChannelTransfer }) {
  // stage 0: R, G and B all take the source component (a row per output: R G B A offset)
  const row = [0, 1, 2].map((k) => (k === transfer.source ? 1 : 0)).join(' ');
  const copy = `${row} 0 0  ${row} 0 0  ${row} 0 0  0 0 0 1 0`;
  const { slope, intercept } = transfer.toLevel;
  const [r, g, b] = transfer.toTint;
  return (
    <svg width="0" height="0" className="absolute" aria-hidden="true" focusable="false">
      <filter id={id} colorInterpolationFilters="sRGB" x="0" y="0" width="100%" height="100%">
        <feColorMatrix type="matrix" values={copy} />
        <feComponentTransfer>
          <feFuncR type="linear" slope={slope} intercept={intercept} />
          <feFuncG type="linear" slope={slope} intercept={intercept} />
          <feFuncB type="linear" slope={slope} intercept={intercept} />
        </feComponentTransfer>
        <feComponentTransfer>
          <feFuncR type="linear" slope={r.slope} intercept={r.intercept} />
          <feFuncG type="linear" slope={g.slope} intercept={g.intercept} />
          <feFuncB type="linear" slope={b.slope} intercept={b.intercept} />
        </feComponentTransfer>
      </filter>
    </svg>
  );
}
