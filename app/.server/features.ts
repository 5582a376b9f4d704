// Each feature that runs work inside the server process registers it with onBoot() on import.
export {};
