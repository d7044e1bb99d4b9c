# The share of a random portfolio's expected variance that further holdings
# could still remove: (vbar - cbar)/N over E[var(N)].
set title "@TITLE@\n@BASIS@"
set xlabel "holding count N (log scale; equal weights)"
set ylabel "diversifiable share of expected variance (%)"
set logscale x
set xrange [1:@XMAX@]
set xtics (@XTICS@)
set yrange [0:100]
# the curve falls to the bottom right: the key goes where it is not
set key top right
set format y "%.0f%%"
