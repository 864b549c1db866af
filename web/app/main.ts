// Page entry: creates the app state and mounts the UI (placeholder until the app lands).
document.getElementById('app')!.textContent = 'seamtally — loading';
