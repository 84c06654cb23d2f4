/**
 * The demo's return series for the invented firm Quillfield Asset Management: about 300 invented assets in
 * 10 sectors, 4 years of daily business-day returns with a planted sector structure, a few late listings and
 * gaps. Invented data (fixed seed, same every run), loaded THROUGH the import service like any upload.
 *
 * r_t,i = μ + β_i f_t^market + γ_i f_t^sector(i) + σ_i ε_t,i with f, ε standard normal.
 */
import { mkdtempSync, rmSync, statSync, writeFileSync, createWriteStream } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomUUID } from 'node:crypto';
import type { Knex } from 'knex';
import { createRandom } from '../engine/random';
import { runImport } from '../services/import/importService';
import { importAssetMetadata } from '../services/assetService';
import { ImportOptionsSchema } from '../../shared/schemas/imports';
import { DEMO_USERS } from './users';

export const DEMO_RETURNS_SEED = 20261202;
export const DEMO_START = '2022-12-01';
export const DEMO_END = '2026-11-30';

/** Invented sector names (trade terms) with invented name endings; no real company names. */
const SECTORS: { sector: string; endings: string[] }[] = [
  { sector: 'Industrials', endings: ['RAILWORKS', 'FOUNDRY', 'MACHINE WORKS', 'FREIGHT'] },
  { sector: 'Utilities', endings: ['WATERWORKS', 'GRID', 'POWER', 'GAS SUPPLY'] },
  { sector: 'Consumer staples', endings: ['PROVISIONS', 'MILLING', 'DAIRIES', 'GROCERS'] },
  { sector: 'Consumer discretionary', endings: ['OUTFITTERS', 'LEISURE', 'MOTOR WORKS', 'HOMEWARES'] },
  { sector: 'Health care', endings: ['THERAPEUTICS', 'CLINICS', 'DIAGNOSTICS', 'MEDICAL'] },
  { sector: 'Financials', endings: ['MUTUAL', 'SAVINGS', 'ASSURANCE', 'CREDIT'] },
  { sector: 'Technology', endings: ['SYSTEMS', 'CIRCUITS', 'SOFTWORKS', 'NETWORKS'] },
  { sector: 'Energy', endings: ['OILFIELDS', 'DRILLING', 'PIPELINES', 'REFINING'] },
  { sector: 'Materials', endings: ['MINERALS', 'TIMBER', 'CHEMICALS', 'CEMENT'] },
  { sector: 'Real estate', endings: ['ESTATES', 'PROPERTIES', 'LANDHOLDINGS', 'TOWERS'] },
];

const FIRST_WORDS = [
  'KESTREL', 'ALDERMOOR', 'BRACKENFELL', 'CORRAN', 'DUNMERE', 'EVERLOCH', 'FENWICK', 'GLASSWATER', 'HOLLOWAY', 'IRONSHAW',
  'JUNIPER', 'KILDARROW', 'LARKSPUR', 'MARROWBY', 'NETHERCOTE', 'OAKENSHAW', 'PENHALLOW', 'QUARRYDEN', 'RAVENSCAR', 'SALTMARSH',
  'THISTLEDOWN', 'UPPERFORD', 'VANTWICK', 'WESTHOLLOW', 'YARROWFIELD', 'ZEALMOOR', 'ASHCOMBE', 'BRIMSTOW', 'CALDERWICK', 'DRAYMOOR',
];

const COUNTRIES = [
  { country: 'GB', currency: 'GBP' },
  { country: 'DE', currency: 'EUR' },
  { country: 'FR', currency: 'EUR' },
  { country: 'NL', currency: 'EUR' },
  { country: 'CH', currency: 'CHF' },
  { country: 'SE', currency: 'SEK' },
];

export interface DemoAsset {
  symbol: string;
  name: string;
  sector: string;
  country: string;
  currency: string;
}

/** Business days (Monday–Friday) from start to end inclusive, as ISO dates. */
export function businessDays(start: string, end: string): string[] {
  const days: string[] = [];
  for (let t = Date.parse(`${start}T00:00:00Z`); t <= Date.parse(`${end}T00:00:00Z`); t += 86_400_000) {
    const w = new Date(t).getUTCDay();
    if (w !== 0 && w !== 6) days.push(new Date(t).toISOString().slice(0, 10));
  }
  return days;
}

function tickerFor(first: string, ending: string, taken: Set<string>): string {
  const a = first.replace(/[^A-Z]/g, '');
  const b = ending.replace(/[^A-Z]/g, '');
  const candidates = [a.slice(0, 2) + b.slice(0, 2), a[0] + a[2] + b.slice(0, 2), a.slice(0, 3) + b[0], a[0] + b.slice(0, 3), a.slice(0, 2) + b[0] + b[b.length - 1]];
  for (const c of candidates) if (!taken.has(c)) return c;
  for (let i = 2; ; i++) if (!taken.has(`${a.slice(0, 3)}${i}`)) return `${a.slice(0, 3)}${i}`;
}

/** The invented universe: 30 first words × 10 sectors, one name ending each, tickers of 4 letters. */
export function demoAssets(): DemoAsset[] {
  const rng = createRandom(DEMO_RETURNS_SEED);
  const taken = new Set<string>();
  const assets: DemoAsset[] = [];
  SECTORS.forEach(({ sector, endings }, s) => {
    FIRST_WORDS.forEach((first, f) => {
      const ending = endings[(f + s) % endings.length];
      const symbol = tickerFor(first, ending, taken);
      taken.add(symbol);
      const place = COUNTRIES[rng.integer(COUNTRIES.length)];
      assets.push({ symbol, name: `${first} ${ending}`, sector, country: place.country, currency: place.currency });
    });
  });
  return assets;
}

/** Writes the demo returns as a long CSV (date,symbol,value) and the metadata CSV; answers their paths. */
export async function writeDemoFiles(dir: string): Promise<{ returnsPath: string; metadataPath: string; assets: DemoAsset[]; observations: number }> {
  const assets = demoAssets();
  const dates = businessDays(DEMO_START, DEMO_END);
  const rng = createRandom(DEMO_RETURNS_SEED + 1);
  const n = assets.length;
  const sectorOf = assets.map((a) => SECTORS.findIndex((s) => s.sector === a.sector));
  const beta = assets.map(() => 0.006 + 0.006 * rng.uniform()); // market loading, 0.6–1.2 % a day
  const gamma = assets.map(() => 0.003 + 0.005 * rng.uniform()); // sector loading, 0.3–0.8 % a day
  const sigma = assets.map(() => 0.007 + 0.013 * rng.uniform()); // specific volatility, 0.7–2.0 % a day
  // Late listings (about 5 %) and a few suspensions (gaps of 12–30 business days).
  const listedFrom = assets.map(() => (rng.uniform() < 0.05 ? Math.floor(dates.length * (0.1 + 0.5 * rng.uniform())) : 0));
  const suspension = assets.map(() => {
    if (rng.uniform() >= 0.03) return null;
    const from = Math.floor(dates.length * (0.2 + 0.6 * rng.uniform()));
    return { from, to: from + 12 + rng.integer(19) };
  });

  const returnsPath = join(dir, 'quillfield-demo-returns.csv');
  const out = createWriteStream(returnsPath);
  out.write('date,symbol,value\n');
  let observations = 0;
  const sectorFactor = new Float64Array(SECTORS.length);
  for (let t = 0; t < dates.length; t++) {
    const market = rng.normal();
    for (let s = 0; s < SECTORS.length; s++) sectorFactor[s] = rng.normal();
    let block = '';
    for (let i = 0; i < n; i++) {
      const r = 0.0003 + beta[i] * market + gamma[i] * sectorFactor[sectorOf[i]] + sigma[i] * rng.normal();
      const hole = rng.uniform() < 0.002; // an odd missing day
      const stop = suspension[i];
      if (t < listedFrom[i] || hole || (stop && t >= stop.from && t < stop.to)) continue;
      block += `${dates[t]},${assets[i].symbol},${r.toFixed(8)}\n`;
      observations++;
    }
    if (!out.write(block)) await new Promise<void>((done) => out.once('drain', () => done()));
  }
  await new Promise<void>((done) => out.end(done));

  const metadataPath = join(dir, 'quillfield-demo-assets.csv');
  writeFileSync(
    metadataPath,
    'symbol,name,sector,country,currency,asset_class\n' + assets.map((a) => `${a.symbol},${a.name},${a.sector},${a.country},${a.currency},Equity`).join('\n') + '\n',
  );
  return { returnsPath, metadataPath, assets, observations };
}

/** Seeds the demo returns and asset metadata through the import services, as the demo analyst. */
export async function seedDemoReturns(knex: Knex, dataDir: string, log: (message: string) => void = console.log): Promise<void> {
  const analystUser = DEMO_USERS.find((u) => u.role === 'analyst')!;
  const analyst = await knex('users').whereRaw('lower(email) = lower(?)', [analystUser.email]).first('id', 'email');
  if (!analyst) throw new Error('the demo analyst must be seeded before the demo returns');
  const dir = mkdtempSync(join(tmpdir(), 'loadline-demo-'));
  try {
    const files = await writeDemoFiles(dir);
    const started = Date.now();
    const outcome = await runImport(knex, {
      filePath: files.returnsPath,
      fileName: 'quillfield-demo-returns.csv',
      fileSize: statSync(files.returnsPath).size,
      options: ImportOptionsSchema.parse({ format: 'long', valueKind: 'simple-decimal', overlap: 'skip', frequency: 'daily' }),
      mode: 'commit',
      user: analyst,
      ip: null,
      ref: randomUUID(),
      dataDir,
    });
    if (outcome.summary.status !== 'committed') {
      throw new Error(`demo returns import failed: ${JSON.stringify(outcome.summary.problems.slice(0, 5))}`);
    }
    await importAssetMetadata({ path: files.metadataPath, originalname: 'quillfield-demo-assets.csv', size: statSync(files.metadataPath).size }, analyst, null);
    log(`[seed] ${files.assets.length} demo assets, ${outcome.summary.counts.inserted} daily returns (${DEMO_START} to ${DEMO_END}) through the import service in ${Date.now() - started} ms`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
