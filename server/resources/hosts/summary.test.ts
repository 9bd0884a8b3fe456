// The summary comment's text: what broke, with links to the host's file view when there is one.
// Markdown link syntax per CommonMark 0.31, section 6.3 (inline links).
import { describe, expect, it } from 'vitest';
import type { Comparison } from '../../../shared/report/api';
import { designEntry, makeReport } from '../../test/factories';
import { COMMENT_MARKER, statusDescription, summaryComment } from './summary';

const none: Comparison = { basis: 'none', baseBranch: 'main', baseRun: null, tolerance: 0.05, designs: [] };

describe('summary comment', () => {
  it('names the failing design and rule, links its file and line, and says there is no base yet', () => {
    const design = designEntry('channel-mixer', { status: 'fail' });
    design.violations[0]!.line = 12;
    const report = makeReport({ designs: [design, designEntry('notch')] });
    const body = summaryComment({
      report, comparison: none, branch: 'feature/mix', commit: 'a'.repeat(40), link: 'http://pleat.test/projects/p/runs/4',
      fileLink: (file, line) => `https://github.com/acme/x/blob/${'a'.repeat(40)}/${file}${line ? `#L${line}` : ''}`,
    });
    expect(body.startsWith(COMMENT_MARKER)).toBe(true);
    expect(body).toContain('#### Pleat: gate broken (1 of 2 designs break a rule)');
    expect(body).toContain('`channel-mixer` ([hw/channel-mixer.fold.yaml](https://github.com/acme/x/blob/aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa/hw/channel-mixer.fold.yaml)) breaks `min_utilization`');
    expect(body).toContain('[hw/channel-mixer.fold.yaml:12](https://github.com/acme/x/blob/aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa/hw/channel-mixer.fold.yaml#L12)');
    expect(body).toContain('No run of `main` to compare with yet.');
    expect(body).toContain('[Open the run in Pleat](http://pleat.test/projects/p/runs/4)');
    expect(body).not.toContain('`notch`');
  });

  it('keeps the status description within 140 characters (GitHub\'s limit, from memory)', () => {
    const many = makeReport({ designs: Array.from({ length: 400 }, (_, i) => designEntry(`d${i}`, { status: i % 2 ? 'fail' : 'error' })) });
    expect(statusDescription(many).length).toBeLessThanOrEqual(140);
    expect(statusDescription(makeReport())).toBe('Pleat gate holds: the one design folds within the rules');
  });
});
