// Package spots turns a star's rotation into what a photometric survey can
// see of it: the amplitude of its starspot modulation, the chance that a
// period is detected in a light curve of given noise and length, and the
// period that the analysis reports, aliases included.
//
// Amplitudes are semi-amplitudes of the equivalent sinusoid in parts per
// million of the mean flux. A percentile range of a light curve (5th to
// 95th percentile, say) is about twice the semi-amplitude.
package spots
