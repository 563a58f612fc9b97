// A slim progress bar with the figures beside it, for jobs that report how far they are.

export function Progress({ done, total, unit }: { done: number; total: number; unit: string }) {
  const share = total > 0 ? Math.min(1, done / total) : 0;
  return (
    <span className="progress" role="progressbar" aria-valuemin={0} aria-valuemax={total} aria-valuenow={done} data-testid="progress">
      <span className="progress-track">
        <span className="progress-fill" style={{ width: `${(share * 100).toFixed(1)}%` }} />
      </span>
      <span className="progress-text">
        {done.toLocaleString('en')} / {total.toLocaleString('en')} {unit}
      </span>
    </span>
  );
}
