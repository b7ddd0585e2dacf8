/**
 * A small XML well-formedness check for the figure tests (XML 1.0, W3C
 * 2008, §2.1 and §3: one root element, every start tag closed in order,
 * attributes quoted and not repeated, only the five predefined entities
 * and character references, no "<" or "&" loose in text). Returns the
 * elements found as { name, attrs } in document order, so tests can count
 * marks and read titles; throws naming the offset of the first fault.
 */
export interface XmlElement {
  name: string;
  attrs: Record<string, string>;
  /** Text directly inside the element (entities decoded). */
  text: string;
}

const NAME = /^[A-Za-z_:][A-Za-z0-9._:-]*/;
const ENTITY = /^&(amp|lt|gt|quot|apos|#[0-9]+|#x[0-9A-Fa-f]+);/;

function decode(text: string, at: number): string {
  let out = "";
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (c === "<") throw new Error(`xml: "<" in text or attribute at offset ${at + i}`);
    if (c !== "&") {
      out += c;
      continue;
    }
    const m = ENTITY.exec(text.slice(i));
    if (!m) throw new Error(`xml: bad entity at offset ${at + i}`);
    const e = m[1];
    out +=
      e === "amp"
        ? "&"
        : e === "lt"
          ? "<"
          : e === "gt"
            ? ">"
            : e === "quot"
              ? '"'
              : e === "apos"
                ? "'"
                : String.fromCodePoint(
                    e.startsWith("#x") ? Number.parseInt(e.slice(2), 16) : Number(e.slice(1)),
                  );
    i += m[0].length - 1;
  }
  return out;
}

export function parseXml(source: string): XmlElement[] {
  const elements: XmlElement[] = [];
  const open: XmlElement[] = [];
  let roots = 0;
  let i = 0;
  const s = source.replace(/^<\?xml[^?]*\?>/, "");
  while (i < s.length) {
    const lt = s.indexOf("<", i);
    const textEnd = lt === -1 ? s.length : lt;
    const chunk = s.slice(i, textEnd);
    if (chunk.trim().length > 0) {
      if (open.length === 0) throw new Error(`xml: text outside the root at offset ${i}`);
      open[open.length - 1].text += decode(chunk, i);
    }
    if (lt === -1) break;
    if (s.startsWith("<!--", lt)) {
      const end = s.indexOf("-->", lt);
      if (end === -1) throw new Error(`xml: unclosed comment at offset ${lt}`);
      i = end + 3;
      continue;
    }
    if (s[lt + 1] === "/") {
      const m = NAME.exec(s.slice(lt + 2));
      const top = open.pop();
      if (!m || !top || top.name !== m[0])
        throw new Error(`xml: </${m?.[0]}> does not close <${top?.name}> at offset ${lt}`);
      const gt = s.indexOf(">", lt);
      if (s.slice(lt + 2 + m[0].length, gt).trim() !== "")
        throw new Error(`xml: junk in end tag at offset ${lt}`);
      i = gt + 1;
      continue;
    }
    const m = NAME.exec(s.slice(lt + 1));
    if (!m) throw new Error(`xml: bad tag name at offset ${lt}`);
    const element: XmlElement = { name: m[0], attrs: {}, text: "" };
    let j = lt + 1 + m[0].length;
    for (;;) {
      while (/\s/.test(s[j] ?? "")) j++;
      if (s.startsWith("/>", j) || s[j] === ">") break;
      const a = NAME.exec(s.slice(j));
      if (!a) throw new Error(`xml: bad attribute at offset ${j}`);
      j += a[0].length;
      if (s[j] !== "=") throw new Error(`xml: attribute ${a[0]} has no value at offset ${j}`);
      const quote = s[j + 1];
      if (quote !== '"' && quote !== "'")
        throw new Error(`xml: attribute ${a[0]} is not quoted at offset ${j}`);
      const close = s.indexOf(quote, j + 2);
      if (close === -1) throw new Error(`xml: unclosed attribute at offset ${j}`);
      if (a[0] in element.attrs) throw new Error(`xml: attribute ${a[0]} repeated at offset ${j}`);
      element.attrs[a[0]] = decode(s.slice(j + 2, close), j + 2);
      j = close + 1;
      if (!/[\s/>]/.test(s[j] ?? ""))
        throw new Error(`xml: no space after attribute at offset ${j}`);
    }
    if (open.length === 0) {
      roots++;
      if (roots > 1) throw new Error(`xml: a second root element at offset ${lt}`);
    }
    elements.push(element);
    if (s[j] === ">") {
      open.push(element);
      i = j + 1;
    } else i = j + 2;
  }
  if (open.length > 0) throw new Error(`xml: <${open[open.length - 1].name}> is never closed`);
  if (roots !== 1) throw new Error("xml: no root element");
  return elements;
}
