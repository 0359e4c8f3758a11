// Package outset writes a command's output files as one set: every file
// of a run goes into a fresh hidden folder beside the output folder, with
// a manifest (manifest.json: each file's name, size and SHA-256, and the
// run's identity), and Commit swaps that folder for the output folder in
// one atomic step, so that the output folder holds either the whole
// earlier set or the whole new one, whatever stops the run (a full disk,
// a signal, SIGKILL, a power cut after the fsyncs).
//
// Around the swap it keeps what a survey server needs:
//
//   - a lock per output folder (Acquire, also for a job folder), taken
//     with flock(2) on a file beside the folder, so that a second run
//     refuses or waits, and a dead run's lock is released by the kernel;
//   - the inputs are never outputs (CheckInputs): an output folder that
//     is, holds, or would carry away an input file is refused before
//     anything is written;
//   - a run's temporary folder is removed when it fails or is stopped,
//     and any run removes the temporaries a killed run left.
//
// Names beside an output folder NAME in its parent folder, all hidden
// and all geored's own:
//
//	.NAME.geored-lock             the lock (kept; empty when free)
//	.NAME.geored-tmp-PID-RANDOM   a run's set being written
//	.NAME.geored-old-PID-RANDOM   an earlier set moved away (fallback swap)
//
// WriteFile is the same discipline for a command that writes one file
// (a plot): a temporary beside it, fsynced and renamed over it.
package outset
