import { PageHeader } from '../../components/PageHeader';

export default function Page() {
  return <PageHeader title="Users" description="Loading this page's data from the server." />;
}
