// @vitest-environment jsdom
/**
 * API reference page: reads the server's real generated document (buildApiDocument), lists every route by
 * resource with its permission rule, finds routes by text, and writes request and answer shapes as outlines.
 * (our checks; the outline format is our own)
 */
import { describe, expect, it } from 'vitest';
import { screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { Component as ApiReferencePage } from '@/app/routes/ApiReference';
import { schemaOutline } from '@/features/api-reference/lib/schemaOutline';
import { buildApiDocument } from '../../server/api-reference/document';
import { ROUTE_RULES } from '../../server/auth/route-rules';
import { asUser, demoUser, mockApi, on, renderRoutes } from './utils';

const doc = buildApiDocument('test');
const routeCount = Object.keys(ROUTE_RULES).length;

describe('schemaOutline', () => {
  it('writes objects, optional keys, nullable values, enums, arrays and followed references', () => {
    const components = { Role: { type: 'string', enum: ['a', 'b'] } };
    const s = {
      type: 'object',
      properties: { id: { type: 'integer' }, note: { anyOf: [{ type: 'string' }, { type: 'null' }] }, roles: { type: 'array', items: { $ref: '#/components/schemas/Role' } } },
      required: ['id', 'roles'],
    };
    expect(schemaOutline(s, components)).toBe('{\n  id: integer,\n  note?: string | null,\n  roles: ("a" | "b")[]\n}');
  });
  it('writes a self-reference by name instead of looping', () => {
    const components = { Node: { type: 'object', properties: { next: { $ref: '#/components/schemas/Node' } } } };
    expect(schemaOutline({ $ref: '#/components/schemas/Node' }, components)).toBe('{\n  next?: Node\n}');
  });
});

describe('API reference page', () => {
  it('lists every route, finds one by text and shows its permission, request and answer', async () => {
    mockApi(asUser(demoUser(['biologist'])), on('GET', '/openapi.json', () => ({ body: doc })));
    renderRoutes([{ path: '/api-reference', Component: ApiReferencePage }], '/api-reference');
    expect(await screen.findByText(`${routeCount} of ${routeCount} routes`)).toBeTruthy();
    await userEvent.type(screen.getByLabelText('Find a route'), 'personal API token');
    expect(screen.getByText(`3 of ${routeCount} routes`)).toBeTruthy();
    const create = screen.getByText('Create a personal API token (the secret is shown once)').closest('details')!;
    await userEvent.click(within(create).getByText('/api/tokens'));
    expect(within(create).getByText(/cookie session; a personal API token gets 403/)).toBeTruthy();
    const body = within(create).getByText('Request body (application/json)').nextElementSibling!;
    expect(body.textContent).toMatch(/scope: "read" \| "write"/);
    expect(body.textContent).toMatch(/expiresInDays/);
    expect(within(create).getByText('Answer 201 (application/json)').nextElementSibling!.textContent).toMatch(/token: string/);
  });

  it('shows path and query parameters of a study route', async () => {
    mockApi(asUser(demoUser(['biologist'])), on('GET', '/openapi.json', () => ({ body: doc })));
    renderRoutes([{ path: '/api-reference', Component: ApiReferencePage }], '/api-reference');
    await userEvent.type(await screen.findByLabelText('Find a route'), 'one page of the cell table');
    const op = screen.getByText('One page of the Cell table').closest('details')!;
    await userEvent.click(within(op).getByText('/api/studies/{studyId}/cell-table'));
    const params = within(op).getByRole('table');
    expect(within(params).getByText('studyId')).toBeTruthy();
    expect(within(params).getByText('pageSize?')).toBeTruthy();
    expect(within(op).getByText(/may "read" in the study/)).toBeTruthy();
  });
});
