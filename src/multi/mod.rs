//! Many sites at once: continuous p-median (multisource Weber) and p-center.
