import type { Pt } from "./format";

/**
 * A pointer position (client pixels) in the SVG's drawing units. Uses the SVG's screen
 * transform where the browser has one, else the viewBox against the element's box.
 */
export function clientToSvg(svg: SVGSVGElement, clientX: number, clientY: number): Pt {
  const ctm = typeof svg.getScreenCTM === "function" ? svg.getScreenCTM() : null;
  if (ctm && typeof svg.createSVGPoint === "function") {
    const p = svg.createSVGPoint();
    p.x = clientX;
    p.y = clientY;
    const q = p.matrixTransform(ctm.inverse());
    return [q.x, q.y];
  }
  const box = svg.getBoundingClientRect();
  const vb = svg.viewBox?.baseVal;
  if (!vb || box.width === 0 || box.height === 0) return [clientX - box.left, clientY - box.top];
  return [vb.x + ((clientX - box.left) / box.width) * vb.width, vb.y + ((clientY - box.top) / box.height) * vb.height];
}
