// After the conflicts module's resolve route answers, publishes the Addendum its resolution may
// have recorded (a dispute on a Signed visit), before the answer leaves: the supervisor's next
// pull, and every tablet's, then holds the Addendum beside the corrected value. The resolution
// has committed by then; if publishing fails here, the publisher's loop retries it.
import {
  Inject,
  Injectable,
  Logger,
  type CallHandler,
  type ExecutionContext,
  type NestInterceptor,
} from '@nestjs/common';
import { concatMap, type Observable } from 'rxjs';
import { ConflictsController } from '../conflicts/conflicts.controller';
import { AddendumPublisher } from './addendum-publisher.service';

@Injectable()
export class AddendumOnResolveInterceptor implements NestInterceptor {
  private readonly logger = new Logger('AddendumOnResolve');

  constructor(@Inject(AddendumPublisher) private readonly publisher: AddendumPublisher) {}

  intercept(context: ExecutionContext, next: CallHandler): Observable<unknown> {
    const resolving =
      context.getType() === 'http' &&
      context.getClass() === ConflictsController &&
      context.getHandler() === ConflictsController.prototype.resolve;
    if (!resolving) return next.handle();
    return next.handle().pipe(
      concatMap(async (answer: unknown) => {
        await this.publisher
          .publishPending()
          .catch((error: unknown) =>
            this.logger.error(`publishing the Addendum failed; it is retried: ${String(error)}`),
          );
        return answer;
      }),
    );
  }
}
