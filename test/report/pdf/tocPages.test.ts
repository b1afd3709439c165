// Finding the page of each section from the text of printed pages: a contents line (title and
// page number) never counts as the heading; sections are searched in order.
import { describe, expect, it } from 'vitest';
import { fillTocPages, findSectionPages, tocHeadings } from '../../../src/report/pdf/tocPages.js';

const html = `<nav class="toc"><ol><li><a href="#a"><span class="toc-title">1. In short</span><span class="toc-page" data-section="a"></span></a></li><li><a href="#b"><span class="toc-title">2. Fish &amp; chips</span><span class="toc-page" data-section="b"></span></a></li></ol></nav><section id="a" class=""><h2>1. In short</h2><p>x</p></section><section id="b" class="new-page"><h2>2. Fish &amp; chips</h2></section>`;

describe('contents page numbers', () => {
  it('reads the numbered headings from the HTML', () => {
    expect(tocHeadings(html)).toEqual([
      { id: 'a', text: '1. In short' },
      { id: 'b', text: '2. Fish & chips' },
    ]);
  });

  it('skips the contents lines and finds each heading alone on its line', () => {
    const pages = ['Contents\n  1. In short ........ 00\n  2. Fish & chips ..... 00\n\n  1.   In short\n', 'more of the summary\n', '   2. Fish & chips   \nbody'];
    expect([...findSectionPages(pages, tocHeadings(html))]).toEqual([
      ['a', 1],
      ['b', 3],
    ]);
  });

  it('leaves out a heading that is not found, and goes on with the next', () => {
    const pages = ['Contents\n1. In short 00\n', '2. Fish & chips\n'];
    expect([...findSectionPages(pages, tocHeadings(html))]).toEqual([['b', 2]]);
  });

  it('fills the page slots of the contents', () => {
    const filled = fillTocPages(html, (id) => (id === 'a' ? '1' : '3'));
    expect(filled).toContain('data-section="a">1</span>');
    expect(filled).toContain('data-section="b">3</span>');
    expect(fillTocPages(filled, () => '9')).toBe(filled);
  });
});
