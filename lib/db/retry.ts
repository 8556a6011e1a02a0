// Re-running a transaction that InnoDB chose as a deadlock victim. InnoDB rolls the whole transaction back when it
// breaks a deadlock (errno 1213, ER_LOCK_DEADLOCK) and expects the application to issue it again; the MariaDB and
// MySQL manuals say so for every application that writes concurrently [common practice]. Only that error (and a
// lock-wait timeout, errno 1205) is retried: anything else is a real failure and is thrown at once.
const RETRYABLE_ERRNOS = new Set([1213, 1205]);

function errnoOf(err: unknown): number | undefined {
  const e = err as { parent?: { errno?: number }; original?: { errno?: number }; errno?: number };
  return e?.parent?.errno ?? e?.original?.errno ?? e?.errno;
}

/** Whether `err` (a Sequelize error or the driver's own) is a deadlock or lock-wait timeout of InnoDB. */
export function isLockConflict(err: unknown): boolean {
  const n = errnoOf(err);
  return n !== undefined && RETRYABLE_ERRNOS.has(n);
}

/**
 * Runs `work` (which must open and finish its own transaction, so that each attempt starts afresh) up to
 * `attempts` times while it fails with a lock conflict, waiting a short, growing, jittered pause in between.
 */
export async function retryOnLockConflict<T>(work: () => Promise<T>, attempts = 4): Promise<T> {
  for (let i = 1; ; i++) {
    try {
      return await work();
    } catch (err) {
      if (i >= attempts || !isLockConflict(err)) throw err;
      await new Promise((resolve) => setTimeout(resolve, 20 * i + Math.random() * 30));
    }
  }
}
