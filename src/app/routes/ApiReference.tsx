/** Route module: API reference: every API route with its permission, request and answer, read from /api/openapi.json. */
import { useApiDocument, ApiReference } from '@/features/api-reference';
import { ErrorNotice } from '@/components/Caution';
import { PageHeader } from '@/components/PageHeader';
import { Loading } from '@/components/Spinner';

export function Component() {
  const doc = useApiDocument();
  return (
    <>
      <PageHeader title="API reference" description="For scripts: sign in with a personal API token (Account page) and call these routes." />
      {doc.isPending ? <Loading /> : doc.isError ? <ErrorNotice error={doc.error} /> : <ApiReference doc={doc.data} />}
    </>
  );
}
