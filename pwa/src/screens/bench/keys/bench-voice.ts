// Saying a recorded value aloud at the instrument (the Web Speech API's speechSynthesis), so the
// clinician need not look away from the patient. A voice that runs on the tablet is preferred,
// since the Bench works offline; without one, the browser's default voice is used if any.
function synthesis(): SpeechSynthesis | null {
  return typeof globalThis.speechSynthesis === 'undefined' ? null : globalThis.speechSynthesis;
}

export function speechAvailable(): boolean {
  return synthesis() !== null && typeof globalThis.SpeechSynthesisUtterance !== 'undefined';
}

/** A voice on the tablet itself in the page's language, else any voice on the tablet. */
export function offlineVoice(): SpeechSynthesisVoice | null {
  const voices = synthesis()?.getVoices() ?? [];
  const local = voices.filter((voice) => voice.localService);
  const language = (globalThis.navigator?.language ?? 'en').slice(0, 2).toLowerCase();
  return local.find((voice) => voice.lang.toLowerCase().startsWith(language)) ?? local[0] ?? null;
}

/** Says `text`, cutting off whatever was still being said (the newest value matters). */
export function sayAloud(text: string): void {
  const speech = synthesis();
  if (!speech || !speechAvailable()) return;
  speech.cancel();
  const utterance = new SpeechSynthesisUtterance(text);
  const voice = offlineVoice();
  if (voice) utterance.voice = voice;
  speech.speak(utterance);
}
