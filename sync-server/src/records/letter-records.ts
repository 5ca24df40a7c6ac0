// Reads of `letter` records for the mail outbox: the final letters a tablet asked to send whose
// request the outbox has not handled yet ("mail_request" notes the handled ones).
import type { EntityManager } from '@mikro-orm/postgresql';
import { Injectable } from '@nestjs/common';
import { sqlRows } from '../database/sql';
import { SERVER_DEVICE } from './stored-record';

/** A send request: the letter, the HLC stamp of the request, and who made it. */
export interface SendRequestRow {
  id: string;
  request_hlc: string;
  requested_by: string;
}

@Injectable()
export class LetterRecords {
  /**
   * Final letters with a send request not yet handled. A request is the tablet's write of
   * `sendRequestedAt`, or (from tablets before that field) of deliveryState `queued`; it is known
   * by the HLC stamp of that write, so asking again after a failure is a new request.
   */
  pendingSendRequests(em: EntityManager, limit: number): Promise<SendRequestRow[]> {
    return sqlRows<SendRequestRow>(
      em,
      `select q."id", q."request" ->> 'hlc' as "request_hlc", q."request" ->> 'by' as "requested_by"
         from (select r."id",
                      case when r."fields" ->> 'sendRequestedAt' is not null then r."stamps" -> 'sendRequestedAt'
                           when r."fields" ->> 'deliveryState' = 'queued'
                            and coalesce(r."stamps" -> 'deliveryState' ->> 'device', '') <> ?
                           then r."stamps" -> 'deliveryState' end as "request"
                 from "sync_record" r
                where r."collection" = 'letter' and not r."deleted" and r."fields" ->> 'status' = 'final') q
        where q."request" is not null
          and not exists (select 1 from "mail_request" m where m."letter_id" = q."id" and m."request_hlc" = q."request" ->> 'hlc')
        order by q."id" limit ?`,
      [SERVER_DEVICE, limit],
    );
  }
}
