import { Loading } from '#src/components/ui/alert';

export function LoadingScreen() {
  return (
    <div className="flex min-h-dvh items-center justify-center">
      <Loading label="Starting Phasewright…" />
    </div>
  );
}
