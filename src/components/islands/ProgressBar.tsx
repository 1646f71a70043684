import { useRef } from 'react';
import { useCssVariables } from './useCssVariables';

/**
 * A thin progress bar. The filled share is a CSS variable set after hydration (no `style` prop); until then a
 * server-rendered bar shows empty.
 *
 * @param fraction - done share, 0 to 1
 * @param animate - slide to each new value
 */
export default function ProgressBar({ fraction, animate = false, className = '' }: { fraction: number; animate?: boolean; className?: string }) {
  const fill = useRef<HTMLDivElement>(null);
  useCssVariables(fill, { '--progress': `${fraction * 100}%` });
  return (
    <div className={`h-2 bg-mica-100 rounded ${className}`} role="progressbar" aria-valuenow={Math.round(fraction * 100)} aria-valuemin={0} aria-valuemax={100}>
      <div ref={fill} className={`h-2 bg-tip-500 rounded w-[var(--progress,0%)] ${animate ? 'transition-all' : ''}`} />
    </div>
  );
}
