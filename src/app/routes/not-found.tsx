import { Link } from "react-router";
import { PageHeader } from "@/components/ui/card";

export function Component() {
  return (
    <div>
      <PageHeader title="Page not found" subtitle="There is no screen at this address." />
      <Link to="/" className="font-semibold text-strand-700 underline">
        Go to your home screen
      </Link>
    </div>
  );
}
