import { TestBed } from '@angular/core/testing';

import { DocsPage } from './docs-page';

describe('DocsPage', () => {
  it('links to the OpenAPI explorer and the GraphQL endpoint served by the gateway', async () => {
    const fixture = TestBed.createComponent(DocsPage);
    await fixture.whenStable();
    const page = fixture.nativeElement as HTMLElement;
    expect(page.querySelector('h1')?.textContent).toBe('Docs');
    const links = Array.from(page.querySelectorAll('a')).map((a) => ({
      href: a.getAttribute('href'),
      text: a.textContent?.trim(),
    }));
    expect(links).toEqual([
      { href: '/docs', text: 'OpenAPI explorer' },
      { href: '/graphql', text: 'GraphQL endpoint' },
    ]);
  });
});
