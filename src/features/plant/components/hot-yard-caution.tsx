import { Notice } from "@/components/ui/notice";

/** DOMAIN.md §7: the yard's own safety rules come first. */
export function HotYardCaution() {
  return (
    <Notice tone="caution" title="Hot yard">
      Inspect only where the site's hot-yard, crane and PPE rules allow. Take the time the rules need — an entry can always wait; nothing here is worth hurrying
      for.
    </Notice>
  );
}
