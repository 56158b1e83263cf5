/**
 * The HTML report in a real browser: Debian's chromium, headless, driven by playwright-core, loads
 * report.html from a file:// URL with the network flags off; no console errors, no request leaves
 * the file, the ranking table is visible, every plot's SVG is drawn with a non-zero size, hostile
 * names stay text, and a screenshot is kept in test-output/report-browser.png.
 * Skipped (with the reason in its title) when /usr/bin/chromium is absent.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { writeReport, type WrittenReport } from '../src/report/index';
import { isPng, pngDimensions } from '../src/report/plots';
import { fabricatedRank } from './helpers/report-fixtures';
import { REPO } from './helpers/cli';

const CHROMIUM = '/usr/bin/chromium';
const HOSTILE_NAME = '<img src=x onerror="document.title=\'owned\'">';

describe.skipIf(!existsSync(CHROMIUM))(`report.html in headless chromium (skipped: ${CHROMIUM} not installed)`, () => {
  let context: BrowserContext;
  let page: Page;
  let written: WrittenReport;
  const consoleMessages: string[] = [];
  const outsideRequests: string[] = [];

  beforeAll(async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-browser-'));
    written = await writeReport(JSON.parse(JSON.stringify(fabricatedRank(['tetrahedral site', 'octahedral site', 'metal cluster', HOSTILE_NAME]))), join(dir, 'report'));
    context = await chromium.launchPersistentContext(join(dir, 'profile'), {
      executablePath: CHROMIUM,
      headless: true,
      viewport: { width: 1000, height: 1400 },
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
    page = await context.newPage();
    page.on('console', (m) => { if (m.type() === 'error' || m.type() === 'warning') consoleMessages.push(`${m.type()}: ${m.text()}`); });
    page.on('pageerror', (e) => consoleMessages.push(`page error: ${e.message}`));
    page.on('request', (r) => { if (!r.url().startsWith('file:') && !r.url().startsWith('data:')) outsideRequests.push(r.url()); });
    await page.goto(pathToFileURL(written.html).href, { waitUntil: 'load' });
  }, 120_000);

  afterAll(async () => {
    await context?.close();
  });

  it('loads without console errors and without requests outside the file', () => {
    expect(consoleMessages).toEqual([]);
    expect(outsideRequests).toEqual([]);
  });

  it('shows the ranking table with one row per candidate', async () => {
    const table = page.locator('#ranking');
    expect(await table.isVisible()).toBe(true);
    expect(await table.locator('tbody tr').count()).toBe(4);
    expect(await table.locator('tbody tr').first().innerText()).toContain('tetrahedral site');
  });

  it('draws every plot as an inline SVG of non-zero size', async () => {
    const plotFiles = written.files.filter((f) => f.endsWith('.svg'));
    const figures = page.locator('figure.plot svg');
    expect(await figures.count()).toBe(plotFiles.length);
    for (let i = 0; i < plotFiles.length; i++) {
      const box = await figures.nth(i).boundingBox();
      expect(box).not.toBeNull();
      expect(box!.width).toBeGreaterThan(100);
      expect(box!.height).toBeGreaterThan(50);
    }
  });

  it('keeps a hostile candidate name as text (no element made from it, no script run)', async () => {
    expect(await page.title()).not.toBe('owned');
    expect(await page.locator('img').count()).toBe(0);
    expect(await page.locator('script').count()).toBe(0);
    expect(await page.locator('#ranking').innerText()).toContain(HOSTILE_NAME);
  });

  it('keeps a screenshot that is a non-trivial PNG', async () => {
    const folder = join(REPO, 'test-output');
    mkdirSync(folder, { recursive: true });
    const path = join(folder, 'report-browser.png');
    const shot = await page.screenshot({ fullPage: true });
    writeFileSync(path, shot);
    const bytes = new Uint8Array(readFileSync(path));
    expect(isPng(bytes)).toBe(true);
    const { width, height } = pngDimensions(bytes);
    expect(width).toBe(1000);
    expect(height).toBeGreaterThan(3000); // the full page: tables, plots and fit sections
    expect(bytes.length).toBeGreaterThan(100_000);
  });
});
