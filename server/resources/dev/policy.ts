// The sent-mail viewer exists only in development, where the fake SMTP server keeps every message.
import type { Env } from '../../config';

/** Anyone on the developer's machine may read the mail the fake SMTP server caught, and only there. */
export const canReadDevMail = (env: Env): boolean => env === 'development';
