// Package atomicfile writes files aside and switches them into place
// together, so that a reader sees every file of a write or none of them,
// even across folders and after a crash.
//
// A Tx locks the folders it writes to, writes each file in full as a hidden
// temporary file next to its final place (".kinmap-TXID-NAME.tmp") and
// syncs it. Commit then writes a journal naming every rename and removal
// into each folder, the home folder's copy last: that rename is the commit
// point. Only then are the files renamed into place and the removals made;
// the journals go last, the home copy after the others. A crash before the
// commit point leaves temporary files and journal copies without a home
// copy, which Recover removes; a crash after it leaves a home journal, from
// which Recover finishes every rename and removal. Renames and removals are
// idempotent, so recovering twice, or from two folders, does no harm.
//
// Locks are advisory locks (flock(2)) on a ".kinmap.lock" file in each
// folder, removed on unlock. The kernel drops them when the process ends,
// killed or not, so a crash never leaves a folder locked; a lock file left
// by a killed process is taken over by the next.
package atomicfile
