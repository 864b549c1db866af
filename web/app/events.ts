// Typed event bus of the app state: panels subscribe to what changed instead of calling each other.

export interface AppEvents {
  'scenes-changed': void;
  'aois-changed': void;
  'model-changed': void;
  'run-progress': void;
  'results-changed': void;
  'threshold-changed': void;
  'review-changed': void;
  'selection-changed': void;
  'shown-date-changed': void;
  'coverage-changed': void;
  'samples-changed': void;
  'notice': { level: 'error' | 'info'; text: string };
}

type Handler<T> = (payload: T) => void;

/** A small typed emitter; one lives on the app state. */
export class EventBus {
  private handlers = new Map<keyof AppEvents, Set<Handler<never>>>();

  on<K extends keyof AppEvents>(name: K, fn: Handler<AppEvents[K]>): () => void {
    let set = this.handlers.get(name);
    if (!set) { set = new Set(); this.handlers.set(name, set); }
    set.add(fn as Handler<never>);
    return () => set.delete(fn as Handler<never>);
  }

  emit<K extends keyof AppEvents>(name: K, ...payload: AppEvents[K] extends void ? [] : [AppEvents[K]]): void {
    for (const fn of this.handlers.get(name) ?? []) (fn as Handler<unknown>)(payload[0]);
  }
}
