/**
 * The safety-case report from the app: the engine builds it (worker/runtime/engine.ts `report`, the model of
 * worker/io/report-model.ts and the document of worker/io/report-html.ts, as `airshade report` does) from the
 * current network, its statistics, the N−1 table and the last plan, with the app's provenance (app/exports.ts
 * exportProvenance: the saved scenario's SHA-256, the tiles', the conventions, the date). The page offers it as a
 * download (`<scenario>-report.html`, one self-contained file) and opens it in a new window for the browser's print
 * to PDF (A4 or A3 as chosen).
 *
 * The print window is a blob: URL of the app's origin, and such a document keeps the policy of the page that made
 * it (bin/serve.mjs: `style-src 'self'`), which refuses the report's inline `<style>`. The window therefore gets
 * the document without that element, and its rules as a constructed style sheet (`adoptedStyleSheets`, which the
 * policy does not govern): the same rules, @page and print footer included, with nothing loaded and no policy
 * refusal. The downloaded file keeps its `<style>` and its own policy (nothing but inline data).
 *
 * Takes a narrow host (the App satisfies it); imports nothing of app/app.ts.
 */
import { CAUTION } from '../shared/caution.ts';
import { download, h } from './dom.ts';
import { progressProxy } from './engine-client.ts';
import { exportProvenance, slug, type ExportHost } from './exports.ts';
import type { PanelHost } from './panel-host.ts';
import { section } from './panels/kit.ts';

/** What the report needs of the app. */
export type ReportHost = ExportHost & Pick<PanelHost, 'job' | 'say' | 'busy'>;

export type Paper = 'A4' | 'A3';

export interface AppReport {
  /** `<scenario name>-report.html`. */
  fileName: string;
  html: string;
  paper: Paper;
}

/** The report's file name for a study's name. */
export const reportFileName = (scenarioName: string) => `${slug(scenarioName)}-report.html`;

/**
 * Asks the engine for the report of the current network (a job with the progress bar). Null, with a message, when
 * there is no coverage yet or the job fails.
 */
export async function makeReport(host: ReportHost, paper: Paper = 'A4'): Promise<AppReport | null> {
  if (!host.coverage) {
    host.say(
      'error',
      'report: found no coverage yet; expected a coverage run first (Coverage panel), then the report',
    );
    return null;
  }
  if (paper !== 'A4' && paper !== 'A3') {
    host.say('error', `report: paper: found "${String(paper)}"; expected A4 or A3`);
    return null;
  }
  return host.job('Report', async (progress) => {
    progress(0.02, 'provenance');
    const provenance = await exportProvenance(host, 'app report', { paper });
    const html = await host.engine.report(
      { provenance, caution: CAUTION, paper },
      progressProxy((f, stage) => progress(0.05 + 0.95 * f, stage)),
    );
    return { fileName: reportFileName(host.state.doc.name), html, paper };
  });
}

/** The report as a download (one self-contained HTML file). */
export function downloadReport(r: AppReport): void {
  download(r.fileName, r.html, 'text/html;charset=utf-8');
}

/** The document without its `<style>` element, and that element's rules (see the module note). */
export function splitStyle(html: string): { body: string; css: string } {
  const m = /<style>([\s\S]*?)<\/style>/.exec(html);
  if (!m) return { body: html, css: '' };
  return { body: html.slice(0, m.index) + html.slice(m.index + m[0].length), css: m[1] };
}

/**
 * A window for the report, opened now (within the click, so that the browser lets it open): it says the report is
 * being made until `showReportIn` fills it. Null when the browser blocked it.
 */
export function openReportWindow(): Window | null {
  const win = window.open('', '_blank');
  if (!win) return null;
  try {
    win.document.title = 'Airshade report';
    win.document.body.textContent = 'The report is being made…';
  } catch {
    // A window the page cannot write into still receives the report below.
  }
  return win;
}

/**
 * Shows the report in `win` (from openReportWindow) as a blob: URL with its rules adopted; resolves once they are
 * (or after 10 s). The URL is released when the window closes or the page leaves.
 */
export async function showReportIn(win: Window, r: AppReport): Promise<void> {
  const { body, css } = splitStyle(r.html);
  const url = URL.createObjectURL(new Blob([body], { type: 'text/html;charset=utf-8' }));
  win.location.replace(url);
  const until = performance.now() + 10_000;
  while (performance.now() < until) {
    await new Promise((res) => setTimeout(res, 50));
    let doc: Document;
    try {
      doc = win.document;
    } catch {
      break; // not ours to style (should not happen: same origin)
    }
    if (doc.URL !== url || doc.readyState === 'loading') continue;
    const view = doc.defaultView as (Window & typeof globalThis) | null;
    if (view && css) {
      const sheet = new view.CSSStyleSheet();
      sheet.replaceSync(css);
      doc.adoptedStyleSheets = [sheet];
    }
    break;
  }
  const release = () => URL.revokeObjectURL(url);
  win.addEventListener('pagehide', release);
  window.addEventListener('pagehide', release);
}

/**
 * The report's block for the Files panel: the paper size, and two buttons — save the report (HTML), or open it
 * for printing (to PDF) in a new window.
 */
export function reportSection(host: ReportHost): HTMLElement {
  const paper = h(
    'select',
    { id: 'report-paper', 'aria-label': 'Paper size of the report' },
    h('option', { value: 'A4' }, 'A4'),
    h('option', { value: 'A3' }, 'A3'),
  );
  const ready = host.coverage !== null && host.busy === null;
  const save = h(
    'button',
    {
      id: 'report-save',
      disabled: !ready,
      onclick: () =>
        void makeReport(host, paper.value as Paper).then((r) => {
          if (r) downloadReport(r);
        }),
    },
    'Save the report (HTML)',
  );
  const open = h(
    'button',
    {
      id: 'report-print',
      disabled: !ready,
      onclick: () => {
        const win = openReportWindow();
        void makeReport(host, paper.value as Paper).then(async (r) => {
          if (!r) {
            win?.close();
            return;
          }
          if (win && !win.closed) await showReportIn(win, r);
          else
            host.say(
              'error',
              'report: the browser did not open a new window (a pop-up blocker?); the report is saved as a file instead',
            );
          if (!win || win.closed) downloadReport(r);
        });
      },
    },
    'Open for printing (PDF)',
  );
  const block = section(
    'Safety-case report',
    h(
      'p',
      { className: 'hint' },
      'One HTML file that needs nothing else: the scenario and its provenance, the assumptions, a map per level, the coverage per volume, the single-site outages (N−1), the last plan, and the cautions. Print it to PDF from its window.',
    ),
    h('label', {}, 'Paper ', paper),
    save,
    open,
    ready ? null : h('p', { className: 'hint' }, 'Compute coverage to make the report.'),
  );
  block.id = 'report-block';
  return block;
}
