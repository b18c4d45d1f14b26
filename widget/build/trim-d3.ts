/**
 * Build-time trims of d3-array and d3-geo for the widget bundle (vite.config.ts), so that the
 * 60 KB gzip budget holds Vue and d3-geo's projections. Each trim either changes nothing the
 * widget can observe or takes out a feature the widget never uses, which then says so plainly if
 * anything ever asks for it. trim-d3.spec.ts loads the trimmed d3-geo and checks that the
 * projections the map uses give the same numbers as the untrimmed one.
 *
 * - d3-array reads properties at load time (`const bisectRight = ascendingBisect.right;`,
 *   `var slice = array.slice;`). A bundler keeps a read it cannot prove free of getters, and with
 *   it the bisect helpers. Each top-level read becomes a call marked pure: dropped when nothing
 *   reads its result, the same value when something does.
 * - d3-geo makes `new Adder()` at load time for the area and length measures (an array and a
 *   counter): marked pure, so they go with the measures.
 * - d3-geo's projections carry a rectangular clip (`clipExtent`) and `fitSize`, `fitWidth`,
 *   `fitHeight` as methods, so they stay in any bundle that makes a projection. The widget fits
 *   with `fitExtent` (whose own clip-extent save and restore only reads the getter) and never
 *   clips to a rectangle: setting one, or calling those three, throws an error that names this file.
 */

export interface Trimmed {
  code: string;
  /** How many places each trim changed, by name; a trim that matched nothing means the library changed. */
  changes: Record<string, number>;
}

const LOAD_TIME_READ = /^(const|var) ([\w$]+) = ([\w$]+(?:\([\w$]*\))?(?:\.[\w$]+)+);$/gm;
const CLIP_RECTANGLE_SET = /: clipRectangle\(x0 = \+_\[0\]\[0\], y0 = \+_\[0\]\[1\], x1 = \+_\[1\]\[0\], y1 = \+_\[1\]\[1\]\)/g;
const FIT_METHOD = /return fit(Size|Width|Height)\(([\w$]+), ([\w$]+), object\);/g;
const LEFT_OUT = 'nadirLeftOut';

function replaceCounting(code: string, re: RegExp, make: (...m: string[]) => string): [string, number] {
  let n = 0;
  const out = code.replace(re, (...m: string[]) => {
    n++;
    return make(...m);
  });
  return [out, n];
}

/** The trimmed module text for a d3-array or d3-geo module id, or null for any other module. */
export function trimD3(code: string, id: string): Trimmed | null {
  if (/[\\/]node_modules[\\/]d3-array[\\/]/.test(id)) {
    const [out, reads] = replaceCounting(code, LOAD_TIME_READ, (_m, kind, name, read) => `${kind} ${name} = /* @__PURE__ */ (() => ${read})();`);
    return { code: out, changes: { 'load-time reads': reads } };
  }
  if (/[\\/]node_modules[\\/]d3-geo[\\/]/.test(id)) {
    const trims: [string, RegExp, (...m: string[]) => string][] = [
      ['new Adder()', /\bnew Adder\(\)/g, () => '/* @__PURE__ */ new Adder()'],
      ['clipExtent', CLIP_RECTANGLE_SET, () => `: ${LEFT_OUT}('clipExtent with an extent')`],
      ['fitSize, fitWidth, fitHeight', FIT_METHOD, (_m, which) => `return ${LEFT_OUT}('fit${which}');`],
    ];
    let out = code;
    const changes: Record<string, number> = {};
    for (const [name, re, make] of trims) [out, changes[name]] = replaceCounting(out, re, make);
    out += `\nfunction ${LEFT_OUT}(what) { throw new Error('d3-geo ' + what + ': left out of the widget build (trim-d3.ts)'); }\n`;
    return { code: out, changes };
  }
  return null;
}
