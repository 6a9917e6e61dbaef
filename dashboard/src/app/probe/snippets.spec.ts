import { TestBed } from '@angular/core/testing';

import { KEY_VARIABLE, Snippets, renderSnippet, renderSnippets, type SnippetRequest } from './snippets';

const request: SnippetRequest = {
  url: 'https://fermiwell.test/v1/eos/evaluate',
  body: { density: [1e6, 1e7], temperature: 1e8, composition: { mixture: 'c12-o16' }, fields: ['pressure'], breakdown: true },
};

describe('snippet generator', () => {
  const all = renderSnippets(request);

  it('puts the URL, the POST method, the key variable and the body in every language', () => {
    for (const text of Object.values(all)) {
      expect(text).toContain(request.url);
      expect(text).toContain(KEY_VARIABLE);
      expect(text).toContain('c12-o16');
      expect(text).not.toContain('fwk_');
    }
    expect(all.curl).toMatch(/curl -sS --fail-with-body -X POST 'https:\/\/fermiwell\.test\/v1\/eos\/evaluate'/);
    expect(all.curl).toContain('Bearer $FERMIWELL_KEY');
    expect(all.typescript).toContain("method: 'POST'");
    expect(all.c).toContain('CURLOPT_POSTFIELDS');
    expect(all.fortran).toContain('use fermiwell');
    expect(all.fortran).toContain('fw_open(fw, url="https://fermiwell.test"');
    expect(all.fortran).toContain('fw_post_json(fw, "/v1/eos/evaluate"');
  });

  it('curl sends the exact JSON body, shell-quoted', () => {
    const quoted = /--data-binary '(.*)'\n/.exec(all.curl)![1];
    expect(JSON.parse(quoted)).toEqual(request.body);
  });

  it('Python uses urllib with method POST and a JSON body that parses back', () => {
    const py = all.python;
    expect(py).toContain('import urllib.request');
    expect(py).toContain('method="POST"');
    expect(py).toContain('os.environ["FERMIWELL_KEY"]');
    const json = /json\.loads\(r"""([\s\S]*?)"""\)/.exec(py)![1];
    expect(JSON.parse(json)).toEqual(request.body);
    // Structure: no tabs, indentation in multiples of four spaces, balanced brackets.
    expect(py).not.toMatch(/\t/);
    const code = py.replace(/r"""[\s\S]*?"""/, '""');
    for (const line of code.split('\n')) expect(line.match(/^ */)![0].length % 4).toBe(0);
    for (const [open, close] of [['(', ')'], ['[', ']'], ['{', '}']]) {
      expect(code.split(open).length).toBe(code.split(close).length);
    }
  });

  it('TypeScript carries the body as an object literal and C as escaped string lines', () => {
    const literal = /const body = ([\s\S]*?);\n\nconst response/.exec(all.typescript)![1];
    expect(JSON.parse(literal)).toEqual(request.body);
    const cBody = /static const char \*BODY =\n([\s\S]*?);\n/.exec(all.c)![1];
    const joined = cBody
      .split('\n')
      .map((l) => /^\s*"(.*)"$/.exec(l)![1].replace(/\\n$/, '\n').replace(/\\"/g, '"'))
      .join('');
    expect(JSON.parse(joined)).toEqual(request.body);
  });

  it('C prints the problem+json of a refused request', () => {
    expect(all.c).toContain('CURLOPT_WRITEFUNCTION');
    expect(all.c).toContain('status == 200 ? stdout : stderr');
  });

  it('Fortran doubles quotes and continues lines', () => {
    expect(renderSnippet('fortran', request)).toContain('""density"": [');
    expect(renderSnippet('fortran', request)).toContain('// &');
  });
});

describe('Snippets component', () => {
  it('shows a note until there is a request, then the tabs', async () => {
    const fixture = TestBed.createComponent(Snippets);
    await fixture.whenStable();
    expect((fixture.nativeElement as HTMLElement).textContent).toContain('Complete the form');
    fixture.componentRef.setInput('request', request);
    await fixture.whenStable();
    const el = fixture.nativeElement as HTMLElement;
    expect(el.textContent).toContain('Python');
    expect(el.querySelector('pre')!.textContent).toContain('curl -sS --fail-with-body -X POST');
  });
});
