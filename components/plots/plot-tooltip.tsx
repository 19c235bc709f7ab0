"use client";

import { TooltipWithBounds, useTooltip } from "@visx/tooltip";
import type { PointerEvent as ReactPointerEvent, ReactNode } from "react";

/** Where a pointer is in the SVG's own user units (robust to CSS scaling) and in CSS px inside the plot's box. */
export function pointerIn(event: ReactPointerEvent<Element>): { x: number; y: number; left: number; top: number } | null {
  const target = event.currentTarget as SVGGraphicsElement;
  const svg = target.ownerSVGElement ?? (target as unknown as SVGSVGElement);
  const matrix = svg.getScreenCTM();
  if (!matrix) return null;
  const point = new DOMPoint(event.clientX, event.clientY).matrixTransform(matrix.inverse());
  const box = (svg.parentElement ?? svg).getBoundingClientRect();
  return { x: point.x, y: point.y, left: event.clientX - box.left + (svg.parentElement?.scrollLeft ?? 0), top: event.clientY - box.top };
}

/** The hover state of a plot: `show(data, pointer)` on move, `hide()` on leave. */
export function usePlotTooltip<T>() {
  const tooltip = useTooltip<T>();
  return {
    data: tooltip.tooltipOpen ? (tooltip.tooltipData ?? null) : null,
    left: tooltip.tooltipLeft ?? 0,
    top: tooltip.tooltipTop ?? 0,
    show: (data: T, at: { left: number; top: number }) => tooltip.showTooltip({ tooltipData: data, tooltipLeft: at.left, tooltipTop: at.top }),
    hide: tooltip.hideTooltip,
  };
}

/** The floating read-out beside the pointer, in the page's own surface and text colours. */
export function PlotTooltip({ left, top, children }: { left: number; top: number; children: ReactNode }) {
  return (
    <TooltipWithBounds
      left={left}
      top={top}
      offsetLeft={12}
      offsetTop={12}
      unstyled
      applyPositionStyle
      className="pointer-events-none z-10 max-w-xs rounded border border-line bg-surface px-2 py-1 font-mono text-xs text-ink shadow"
    >
      {children}
    </TooltipWithBounds>
  );
}
