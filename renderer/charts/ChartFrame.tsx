// Every chart sits in a frame with its title, a one-line reading guide and the three exports.
import { useRef, useState, type ReactNode } from 'react';
import { useHost } from '../app/hostContext.js';
import { fileNameFor } from '../shape/csv.js';
import { svgText, svgToPng } from './exportChart.js';

interface Props {
  readonly title: string;
  /** The title the exported files are named after (e.g. with the trial), when it differs. */
  readonly exportName?: string;
  readonly note?: ReactNode;
  /** The chart's numbers as CSV, built on demand. */
  readonly csv: () => string;
  readonly testId?: string;
  readonly className?: string;
  readonly children: ReactNode;
}

export function ChartFrame({ title, exportName, note, csv, testId, className, children }: Props) {
  const fileTitle = exportName ?? title;
  const host = useHost();
  const body = useRef<HTMLDivElement>(null);
  const [message, setMessage] = useState<string | null>(null);
  const svg = (): SVGSVGElement | null => body.current?.querySelector('svg.chart-svg, svg.recharts-surface') ?? null;
  const run = async (what: string, action: () => Promise<void>) => {
    try {
      await action();
      setMessage(`${what} saved`);
    } catch (e) {
      setMessage(`${what} failed: ${String(e)}`);
    }
  };
  const exportSvg = () =>
    run('SVG', async () => {
      const s = svg();
      if (!s) throw new Error('nothing drawn yet');
      await host.saveFile(fileNameFor(fileTitle, 'svg'), svgText(s));
    });
  const exportPng = () =>
    run('PNG', async () => {
      const s = svg();
      if (!s) throw new Error('nothing drawn yet');
      await host.saveFile(fileNameFor(fileTitle, 'png'), await svgToPng(s));
    });
  const exportCsv = () => run('CSV', () => host.saveFile(fileNameFor(fileTitle, 'csv'), csv()));
  return (
    <figure className={`chart-frame ${className ?? ''}`} data-testid={testId} aria-label={title}>
      <figcaption>
        <span className="chart-title">{title}</span>
        <span className="chart-exports" role="group" aria-label={`Export ${title}`}>
          <button type="button" className="small" onClick={exportSvg} aria-label={`Export ${title} as SVG`}>
            SVG
          </button>
          <button type="button" className="small" onClick={exportPng} aria-label={`Export ${title} as PNG`}>
            PNG
          </button>
          <button type="button" className="small" onClick={exportCsv} aria-label={`Export the numbers of ${title} as CSV`}>
            CSV
          </button>
        </span>
      </figcaption>
      <div ref={body} className="chart-body">
        {children}
      </div>
      {note ? <p className="chart-note">{note}</p> : null}
      {message ? (
        <p className="chart-message" role="status">
          {message}
        </p>
      ) : null}
    </figure>
  );
}
