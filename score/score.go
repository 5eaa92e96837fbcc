// Package score measures how well regime timelines agree with a known truth:
// the regime of every window and the switches of every site.
//
// The measures and their sources:
//   - ARI, the adjusted Rand index of two partitions (L. Hubert and
//     P. Arabie, "Comparing partitions", Journal of Classification 2,
//     1985): pairs of windows put together or apart alike, corrected for
//     chance; 1 for the same partition, about 0 for unrelated ones.
//   - AMI, the adjusted mutual information (N. X. Vinh, J. Epps and
//     J. Bailey, "Information theoretic measures for clusterings
//     comparison", JMLR 11, 2010), normalised by the arithmetic mean of the
//     two entropies, as scikit-learn does by default since version 0.22.
//   - Switches: precision, recall and F1 of the found switches against the
//     true ones, each true switch matched to at most one found switch of
//     the same site within a tolerance.
//   - Covering, the segment covering (P. Arbeláez, M. Maire, C. Fowlkes and
//     J. Malik, "Contour detection and hierarchical image segmentation",
//     IEEE TPAMI 33, 2011), as used for change points by G. J. J. van den
//     Burg and C. K. I. Williams, "An evaluation of change point detection
//     algorithms", 2020: every true segment weighted by its length and
//     scored by its best Jaccard overlap with a found segment.
//
// Folder scores a kinmap output folder against truth files and reports the
// same measures for a baseline that predicts no switch at all.
package score
