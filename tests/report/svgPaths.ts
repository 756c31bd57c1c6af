/**
 * Test support: reads the line paths of a Vega SVG back into plot coordinates. Walks the tags,
 * accumulating translate() transforms of the enclosing groups, and reports each path with the classes
 * of its nearest mark group, its stroke colour and its vertices in px relative to the SVG origin.
 */
export interface SvgPath {
  readonly markClass: string;
  readonly stroke: string | null;
  /** Vertices, px relative to the enclosing groups' origin (for a layered Vega chart: the plotting area's top-left corner). */
  readonly points: readonly (readonly [number, number])[];
  /** That origin, px from the SVG's top-left corner. */
  readonly origin: readonly [number, number];
}

function attribute(attributes: string, name: string): string | null {
  const m = new RegExp(`\\s${name}="([^"]*)"`).exec(attributes);
  return m ? m[1]! : null;
}

function translateOf(attributes: string): [number, number] {
  const t = attribute(attributes, 'transform');
  if (!t) return [0, 0];
  const m = /translate\(\s*([-\d.e]+)[ ,]+([-\d.e]+)\s*\)/.exec(t);
  return m ? [Number(m[1]), Number(m[2])] : [0, 0];
}

/** Vertices of an SVG path made of absolute M/L commands (what Vega writes for line and rect marks). */
export function pathVertices(d: string): [number, number][] {
  const out: [number, number][] = [];
  const tokens = d.match(/[MLZmlzhvHV]|[-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?/g) ?? [];
  let command = 'M';
  for (let k = 0; k < tokens.length; ) {
    const token = tokens[k]!;
    if (/^[A-Za-z]$/.test(token)) { command = token; k++; continue; }
    if (command === 'M' || command === 'L') {
      out.push([Number(tokens[k]), Number(tokens[k + 1])]);
      k += 2;
    } else {
      throw new Error(`path command ${command} not handled in test parser`);
    }
  }
  return out;
}

export function svgPaths(svg: string, markClassPattern: RegExp): SvgPath[] {
  const stack: { dx: number; dy: number; markClass: string }[] = [{ dx: 0, dy: 0, markClass: '' }];
  const out: SvgPath[] = [];
  for (const m of svg.matchAll(/<(\/?)(g|path)\b([^>]*?)(\/?)>/g)) {
    const closing = m[1] === '/';
    const tag = m[2]!;
    const attributes = m[3] ?? '';
    const selfClosing = m[4] === '/';
    const top = stack[stack.length - 1]!;
    if (tag === 'g') {
      if (closing) { stack.pop(); continue; }
      const [tx, ty] = translateOf(attributes);
      const cls = attribute(attributes, 'class') ?? '';
      const frame = { dx: top.dx + tx, dy: top.dy + ty, markClass: cls.includes('role-mark') ? cls : top.markClass };
      if (!selfClosing) stack.push(frame);
      continue;
    }
    if (closing || !markClassPattern.test(top.markClass)) continue;
    const d = attribute(attributes, 'd');
    if (!d) continue;
    const [tx, ty] = translateOf(attributes);
    out.push({
      markClass: top.markClass,
      stroke: attribute(attributes, 'stroke'),
      points: pathVertices(d).map(([x, y]) => [x + tx, y + ty] as const),
      origin: [top.dx, top.dy],
    });
  }
  return out;
}
