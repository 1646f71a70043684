import type { ChannelTransfer } from './layerDisplay';

/**
 * An SVG filter that re-windows one tinted fluorescence layer (see `channelTransfer`). Referenced
 * from that layer's element with `filter: url(#id)`; sRGB so the linear stages act on the tile's
 * own 8-bit values, as the transfer assumes.
 */
export default function ChannelFilter({ id, transfer }: { id: string; transfer: ChannelTransfer }) {
  const stage = (s: ChannelTransfer['toLevel']) => (
    <feComponentTransfer>
      <feFuncR type="linear" slope={s[0].slope} intercept={s[0].intercept} />
      <feFuncG type="linear" slope={s[1].slope} intercept={s[1].intercept} />
      <feFuncB type="linear" slope={s[2].slope} intercept={s[2].intercept} />
    </feComponentTransfer>
  );
  return (
    <svg width="0" height="0" className="absolute" aria-hidden="true" focusable="false">
      <filter id={id} colorInterpolationFilters="sRGB" x="0" y="0" width="100%" height="100%">
        {stage(transfer.toLevel)}
        {stage(transfer.toTint)}
      </filter>
    </svg>
  );
}
