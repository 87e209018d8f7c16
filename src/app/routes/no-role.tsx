import { PageHeader } from "@/components/ui/card";

export function Component() {
  return <PageHeader title="No role assigned" subtitle="Your account has no role yet. Ask an administrator to give you one." />;
}
