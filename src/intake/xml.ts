// A small XML tag scanner for the parts of an .xlsx workbook. It knows only elements,
// attributes, text, CDATA and the five predefined entities plus character references: no DTDs,
// no external entities, so a hostile workbook cannot make it fetch or expand anything.

export class XmlFormatError extends Error {}

export interface XmlHandler {
  /** `name` is the local name (any "x:" prefix removed); attributes are raw text, see attrValue. */
  open(name: string, attrs: string, selfClosing: boolean): void;
  close(name: string): void;
  /** Text between tags as [start, end) of the source; decode with decodeXmlText when needed. */
  text(source: string, start: number, end: number, isCdata: boolean): void;
}

function localName(qname: string): string {
  const colon = qname.indexOf(':');
  return colon < 0 ? qname : qname.slice(colon + 1);
}

export function scanXml(xml: string, handler: XmlHandler): void {
  const n = xml.length;
  let pos = 0;
  while (pos < n) {
    const lt = xml.indexOf('<', pos);
    if (lt < 0) {
      handler.text(xml, pos, n, false);
      return;
    }
    if (lt > pos) handler.text(xml, pos, lt, false);
    const next = xml.charCodeAt(lt + 1);
    if (next === 33 /* ! */) {
      if (xml.startsWith('<!--', lt)) {
        const end = xml.indexOf('-->', lt + 4);
        if (end < 0) throw new XmlFormatError('unterminated comment');
        pos = end + 3;
      } else if (xml.startsWith('<![CDATA[', lt)) {
        const end = xml.indexOf(']]>', lt + 9);
        if (end < 0) throw new XmlFormatError('unterminated CDATA section');
        handler.text(xml, lt + 9, end, true);
        pos = end + 3;
      } else {
        const end = xml.indexOf('>', lt);
        if (end < 0) throw new XmlFormatError('unterminated declaration');
        pos = end + 1;
      }
      continue;
    }
    if (next === 63 /* ? */) {
      const end = xml.indexOf('?>', lt);
      if (end < 0) throw new XmlFormatError('unterminated processing instruction');
      pos = end + 2;
      continue;
    }
    const end = findTagEnd(xml, lt + 1);
    if (end < 0) throw new XmlFormatError('unterminated tag');
    if (next === 47 /* / */) {
      handler.close(localName(xml.slice(lt + 2, end).trim()));
    } else {
      const selfClosing = xml.charCodeAt(end - 1) === 47;
      const bodyEnd = selfClosing ? end - 1 : end;
      let nameEnd = lt + 1;
      while (nameEnd < bodyEnd && !isXmlSpace(xml.charCodeAt(nameEnd))) nameEnd++;
      const name = xml.slice(lt + 1, nameEnd);
      if (name.length === 0) throw new XmlFormatError('empty tag name');
      handler.open(localName(name), xml.slice(nameEnd, bodyEnd), selfClosing);
    }
    pos = end + 1;
  }
}

function isXmlSpace(c: number): boolean {
  return c === 32 || c === 9 || c === 10 || c === 13;
}

/** Index of the '>' closing a tag, skipping '>' inside quoted attribute values. */
function findTagEnd(xml: string, from: number): number {
  let quote = 0;
  for (let i = from; i < xml.length; i++) {
    const c = xml.charCodeAt(i);
    if (quote !== 0) {
      if (c === quote) quote = 0;
    } else if (c === 34 || c === 39) quote = c;
    else if (c === 62) return i;
  }
  return -1;
}

/** Value of attribute `name` (exact qualified name, e.g. "r" or "r:id") in raw attribute text. */
export function attrValue(attrs: string, name: string): string | undefined {
  let from = 0;
  for (;;) {
    const at = attrs.indexOf(name, from);
    if (at < 0) return undefined;
    from = at + 1;
    if (at > 0 && !isXmlSpace(attrs.charCodeAt(at - 1))) continue;
    let p = at + name.length;
    while (p < attrs.length && isXmlSpace(attrs.charCodeAt(p))) p++;
    if (attrs.charCodeAt(p) !== 61 /* = */) continue;
    p++;
    while (p < attrs.length && isXmlSpace(attrs.charCodeAt(p))) p++;
    const q = attrs.charCodeAt(p);
    if (q !== 34 && q !== 39) return undefined;
    const close = attrs.indexOf(q === 34 ? '"' : "'", p + 1);
    if (close < 0) return undefined;
    return decodeXmlText(attrs.slice(p + 1, close));
  }
}

const NAMED: Record<string, string> = { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'" };

export function decodeXmlText(raw: string): string {
  if (raw.indexOf('&') < 0) return raw;
  return raw.replace(/&(#x[0-9a-fA-F]+|#[0-9]+|[a-zA-Z]+);/g, (whole, body: string) => {
    if (body.charCodeAt(0) === 35) {
      const code = body.charCodeAt(1) === 120 ? parseInt(body.slice(2), 16) : parseInt(body.slice(1), 10);
      return code >= 0 && code <= 0x10ffff ? String.fromCodePoint(code) : whole;
    }
    return NAMED[body] ?? whole;
  });
}
