/**
 * Strict XML well-formedness checker shared by the SVG plot tests (test-only; no dependency).
 */

export interface XmlElement {
  name: string;
  attrs: Map<string, string>;
}

const NAME_START = (c: string) => (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c === '_' || c === ':';
const NAME_CHAR = (c: string) => NAME_START(c) || (c >= '0' && c <= '9') || c === '-' || c === '.';
const SPACE = (c: string) => c === ' ' || c === '\n' || c === '\t' || c === '\r';
const PREDEFINED = new Set(['amp', 'lt', 'gt', 'quot', 'apos']);

/**
 * Strict well-formedness check for the XML subset our SVG uses (XML 1.0 rules: one root,
 * balanced and properly nested tags, quoted and unique attributes, no raw `<` in values, only
 * predefined or numeric entity references, comments without `--`). Returns the elements.
 */
export function parseXml(src: string): XmlElement[] {
  let p = 0;
  const stack: string[] = [];
  const elements: XmlElement[] = [];
  let roots = 0;
  const fail = (msg: string): never => {
    throw new Error(`${msg} at offset ${p}: ${JSON.stringify(src.slice(p, p + 40))}`);
  };
  const checkText = (text: string) => {
    for (let k = 0; k < text.length; k++) {
      if (text[k] === '<') fail('raw < in text or attribute');
      if (text[k] !== '&') continue;
      const end = text.indexOf(';', k);
      if (end < 0) fail('unterminated entity');
      const ent = text.slice(k + 1, end);
      const numeric = ent.startsWith('#x') ? /^#x[0-9a-fA-F]+$/.test(ent) : /^#[0-9]+$/.test(ent);
      if (!PREDEFINED.has(ent) && !numeric) fail(`unknown entity &${ent};`);
    }
  };
  const readName = (): string => {
    const start = p;
    if (!NAME_START(src[p] ?? '')) fail('expected a name');
    while (p < src.length && NAME_CHAR(src[p]!)) p++;
    return src.slice(start, p);
  };
  if (src.startsWith('<?xml')) {
    const end = src.indexOf('?>');
    if (end < 0) fail('unterminated XML declaration');
    p = end + 2;
  }
  while (p < src.length) {
    if (src.startsWith('<!--', p)) {
      const end = src.indexOf('-->', p + 4);
      if (end < 0) fail('unterminated comment');
      if (src.slice(p + 4, end).includes('--')) fail('-- inside a comment');
      p = end + 3;
    } else if (src.startsWith('</', p)) {
      p += 2;
      const name = readName();
      while (SPACE(src[p] ?? '')) p++;
      if (src[p] !== '>') fail('expected > after end tag name');
      p++;
      const open = stack.pop();
      if (open !== name) fail(`end tag </${name}> does not match <${open}>`);
    } else if (src[p] === '<') {
      p++;
      if (stack.length === 0 && ++roots > 1) fail('more than one root element');
      const el: XmlElement = { name: readName(), attrs: new Map() };
      for (;;) {
        const hadSpace = SPACE(src[p] ?? '');
        while (SPACE(src[p] ?? '')) p++;
        if (src[p] === '>' || src.startsWith('/>', p)) break;
        if (!hadSpace) fail('attributes must be separated by white space');
        const an = readName();
        if (src[p] !== '=') fail(`attribute ${an} has no =`);
        p++;
        const q = src[p];
        if (q !== '"' && q !== "'") fail(`attribute ${an} is not quoted`);
        const end = src.indexOf(q!, p + 1);
        if (end < 0) fail('unterminated attribute value');
        const value = src.slice(p + 1, end);
        checkText(value);
        if (el.attrs.has(an)) fail(`duplicate attribute ${an}`);
        el.attrs.set(an, value);
        p = end + 1;
      }
      elements.push(el);
      if (src[p] === '>') {
        stack.push(el.name);
        p++;
      } else p += 2;
    } else {
      const end = src.indexOf('<', p);
      const text = src.slice(p, end < 0 ? src.length : end);
      if (stack.length === 0 && text.trim() !== '') fail('text outside the root element');
      checkText(text);
      p = end < 0 ? src.length : end;
    }
  }
  if (stack.length > 0) fail(`unclosed <${stack[stack.length - 1]}>`);
  if (roots !== 1) fail('no root element');
  const ids = elements.map((e) => e.attrs.get('id')).filter((v) => v !== undefined);
  if (new Set(ids).size !== ids.length) throw new Error('duplicate id');
  return elements;
}
