import { Button } from "../../../components/button";
import { Panel } from "../../../components/panel";
import { toast } from "../../../lib/toast";
import { useStudio } from "../api/get-studio";
import { useUpdateStudio } from "../api/studio-settings";

/**
 * On a studio first set up as the demo: a way to take it on as the studio's own, which drops the
 * "Demo studio" mark from the rail. Nothing else changes: the sample scans and their pieces stay
 * until someone rejects or deletes them, so no work done meanwhile is lost.
 */
export function DemoMarkPanel() {
  const studio = useStudio();
  const update = useUpdateStudio();
  if (!studio.data?.demo) return null;
  const drop = () =>
    update.mutate(
      { demo: false },
      {
        onSuccess: () => toast.success("This is your own studio now: the demo mark is gone from the rail."),
        onError: (error) => toast.error(error.message),
      },
    );
  return (
    <Panel title="Demo studio" titleId="demo-title" className="max-w-5xl">
      <div className="flex flex-wrap items-center justify-between gap-4">
        <p className="max-w-2xl text-sm text-ink-soft">
          This installation started as the demo, with sample scans of an invented studio, and the rail marks it so. Once you use it for your
          own work, take the mark away. The sample scans and their pieces stay until you reject or delete them.
        </p>
        <Button type="button" variant="secondary" busy={update.isPending} onClick={drop}>
          Use it as our own studio
        </Button>
      </div>
    </Panel>
  );
}
