/**
 * Entry of the web app: starts the App (app/app.ts) on the page, and lets files be dropped anywhere on the side
 * panel (tiles go to the terrain, anything else is read as a scenario with its files).
 */
import './style.css';
import { App } from './app.ts';
import { isTiff } from './files.ts';
import { loadScenarioFiles } from './panels/files.ts';
import { loadTerrainFiles } from './panels/ground.ts';
import { makeReport, reportSection, type Paper } from './report.ts';

const root = document.getElementById('app')!;
const app = new App();
(window as unknown as { airshade: App }).airshade = app;
// The report's block and maker, for the end-to-end tests until the Files panel shows the block (app/report.ts).
(window as unknown as { airshadeReport: unknown }).airshadeReport = {
  make: (paper?: Paper) => makeReport(app, paper),
  section: () => reportSection(app),
};

document.addEventListener('dragover', (e) => e.preventDefault());
document.addEventListener('drop', (e) => {
  e.preventDefault();
  const files = [...(e.dataTransfer?.files ?? [])];
  if (files.length === 0 || !app.state) return;
  if (files.every((f) => isTiff(f.name))) void loadTerrainFiles(app, files, false);
  else void loadScenarioFiles(app, files);
});

app.start(root).catch((e: unknown) => {
  root.dataset.failed = 'true';
  const p = document.createElement('p');
  p.className = 'fatal';
  p.textContent = `Airshade could not start: ${e instanceof Error ? e.message : String(e)}`;
  root.prepend(p);
});
