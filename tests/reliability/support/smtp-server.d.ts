/** The part of smtp-server's API the SMTP fault test uses (the package ships no types). */
declare module 'smtp-server' {
  import type { Readable } from 'node:stream';
  export interface SMTPServerOptions {
    authOptional?: boolean;
    disabledCommands?: string[];
    logger?: boolean;
    onData?(stream: Readable, session: { envelope: { rcptTo: Array<{ address: string }> } }, callback: (error?: Error | null) => void): void;
  }
  export class SMTPServer {
    constructor(options: SMTPServerOptions);
    listen(port: number, host: string, callback?: () => void): void;
    close(callback?: () => void): void;
    on(event: 'error', listener: (error: Error) => void): this;
  }
}
