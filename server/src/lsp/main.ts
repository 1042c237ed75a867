// Entry point of dist/server.js: the language server on the connection named by the arguments
// (--stdio, --node-ipc or --socket=PORT).
import { startLanguageServer } from './server';

startLanguageServer();
