// Well-formedness check of XML text with `sax` in strict mode (a general-purpose XML parser,
// installed with the packaging tool's dependencies). Returns the element names in document order.
import { createRequire } from 'node:module';

interface SaxParser {
  onerror: (e: Error) => void;
  onopentag: (node: { name: string; attributes: Record<string, string> }) => void;
  write(text: string): SaxParser;
  close(): void;
}
const sax = createRequire(import.meta.url)('sax') as { parser(strict: boolean): SaxParser };

export interface XmlElement {
  name: string;
  attributes: Record<string, string>;
}

/** Parses strictly; throws on the first well-formedness error. */
export function parseXml(text: string): XmlElement[] {
  const parser = sax.parser(true);
  const elements: XmlElement[] = [];
  parser.onerror = (e) => {
    throw e;
  };
  parser.onopentag = (node) => elements.push({ name: node.name, attributes: node.attributes });
  parser.write(text).close();
  return elements;
}
