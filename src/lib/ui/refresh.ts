// Re-running a page's load for live updates, except while the person is navigating away: an
// invalidation started during a navigation supersedes it, so a click on a link would be lost
// whenever a live event or the poll happened to land between the click and the next page.
import { invalidate } from '$app/navigation';
import { navigating } from '$app/state';

export function refreshUnlessNavigating(dependency: string): void {
	if (navigating.to) return;
	void invalidate(dependency);
}
