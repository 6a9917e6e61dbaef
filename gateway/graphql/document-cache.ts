/**
 * The cache of parsed and validated GraphQL documents (Apollo Server's `documentStore`), keyed by a
 * hash of the query text — text any caller chooses, signed in or not. Apollo's default is an LRU
 * cache of 30 MiB, but it sizes a document by the length of its JSON, which leaves out the token
 * list every parsed node keeps (`loc`): measured here, one 300-byte dashboard-like query costs
 * ~5.4 kB by that estimate and ~22 kB of heap, so the default lets anonymous callers fill ~120 MB
 * with distinct valid queries. The dashboard sends a few dozen distinct documents; 2 MiB (by
 * Apollo's estimate, ~8 MB of heap, ~400 such documents) keeps them all and bounds the rest.
 */
import type { DocumentNode } from 'graphql';
import { InMemoryLRUCache } from '@apollo/utils.keyvaluecache';

/** Apollo's size estimate (JSON length) of all cached documents together. */
export const DOCUMENT_CACHE_ESTIMATED_BYTES = 2 * 1024 * 1024;

export function documentCache(maxSize = DOCUMENT_CACHE_ESTIMATED_BYTES): InMemoryLRUCache<DocumentNode> {
  return new InMemoryLRUCache<DocumentNode>({ maxSize });
}
