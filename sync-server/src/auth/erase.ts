import { UnauthorizedException } from '@nestjs/common';

export const REVOKED_TABLET_MESSAGE = 'This tablet has been revoked; it must erase its local data.';

/** A 401 whose body carries `erase: true`: the tablet must delete everything it holds. */
export function erasingRefusal(message: string = REVOKED_TABLET_MESSAGE): UnauthorizedException {
  return new UnauthorizedException({ message, erase: true });
}
