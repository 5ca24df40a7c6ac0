// Reads an enrolment QR code through the camera: getUserMedia into a <video>, frames drawn on a
// canvas and decoded by jsQR. Says so in words when there is no camera or it is not allowed, so
// the person types the code instead.
import jsQR from 'jsqr';
import { useEffect, useRef, useState } from 'react';
import { Button } from '../../auth/ui/controls';

type CameraState = 'starting' | 'scanning' | 'unavailable' | 'denied';

export function QrScanner({
  onCode,
  onClose,
}: {
  onCode: (text: string) => void;
  onClose: () => void;
}) {
  const video = useRef<HTMLVideoElement>(null);
  const [state, setState] = useState<CameraState>('starting');
  // The latest callback, without restarting the camera when the parent re-renders.
  const onCodeRef = useRef(onCode);
  useEffect(() => {
    onCodeRef.current = onCode;
  }, [onCode]);

  useEffect(() => {
    let stream: MediaStream | null = null;
    let frame = 0;
    let stopped = false;
    const canvas = document.createElement('canvas');
    const context = canvas.getContext('2d', { willReadFrequently: true });

    const scan = () => {
      if (stopped) return;
      const element = video.current;
      if (
        element &&
        context &&
        element.readyState >= element.HAVE_CURRENT_DATA &&
        element.videoWidth > 0
      ) {
        canvas.width = element.videoWidth;
        canvas.height = element.videoHeight;
        context.drawImage(element, 0, 0, canvas.width, canvas.height);
        const image = context.getImageData(0, 0, canvas.width, canvas.height);
        const found = jsQR(image.data, image.width, image.height, {
          inversionAttempts: 'dontInvert',
        });
        if (found?.data) {
          onCodeRef.current(found.data);
          return;
        }
      }
      frame = requestAnimationFrame(scan);
    };

    if (!navigator.mediaDevices?.getUserMedia || !context) {
      setState('unavailable');
      return;
    }
    navigator.mediaDevices
      .getUserMedia({ video: { facingMode: 'environment' }, audio: false })
      .then(async (media) => {
        if (stopped) {
          media.getTracks().forEach((t) => t.stop());
          return;
        }
        stream = media;
        if (video.current) {
          video.current.srcObject = media;
          await video.current.play().catch(() => undefined);
        }
        setState('scanning');
        frame = requestAnimationFrame(scan);
      })
      .catch((error: unknown) => {
        setState(
          error instanceof DOMException && error.name === 'NotAllowedError'
            ? 'denied'
            : 'unavailable',
        );
      });
    return () => {
      stopped = true;
      cancelAnimationFrame(frame);
      stream?.getTracks().forEach((t) => t.stop());
    };
  }, []);

  return (
    <section aria-label="Scan the enrolment QR code">
      {state === 'unavailable' ? (
        <p role="status">This device has no camera we can use. Type the code below instead.</p>
      ) : state === 'denied' ? (
        <p role="status">
          The camera is not allowed for Fuselight. Allow it in the browser settings, or type the
          code below.
        </p>
      ) : (
        <p role="status">
          {state === 'starting'
            ? 'Starting the camera…'
            : 'Hold the QR code from the Fleet screen in front of the camera.'}
        </p>
      )}
      <video
        ref={video}
        className="fl-id-video"
        muted
        playsInline
        aria-label="Camera view"
        hidden={state !== 'scanning'}
      />
      <div className="fl-id-row">
        <Button tone="quiet" onClick={onClose}>
          Stop scanning
        </Button>
      </div>
    </section>
  );
}
