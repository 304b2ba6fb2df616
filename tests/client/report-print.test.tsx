// @vitest-environment jsdom
/** The printed report's running header: study and title, as a CSS string that no title can break out of. (CSS Syntax Level 3, §4.3.5 strings) */
import { describe, expect, it } from 'vitest';
import { reportHeading, runningHeadCss } from '../../src/features/reports/components/ReportView';

describe('running header of the printed report', () => {
  it('names the study, then the report', () => {
    expect(reportHeading('Shared puncta', 'Treatment raises r')).toBe('Shared puncta · Treatment raises r');
  });
  it('escapes quotes, backslashes, line breaks and "<" so the title stays one CSS string', () => {
    const css = runningHeadCss('A "quoted" \\ title\nwith </style> inside');
    expect(css).toContain('content: "A \\"quoted\\" \\\\ title with \\3c /style> inside";');
    expect(css).not.toContain('</style>');
    expect(css).toContain('@page :first { @top-left { content: none; } }');
    // the string ends where it should: the first unescaped quote after `content: "` is the closing one
    const body = css.slice(css.indexOf('content: "') + 10);
    const close = body.search(/(?<!\\)"/);
    expect(body.slice(close, close + 2)).toBe('";');
  });
});
