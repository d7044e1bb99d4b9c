# Risk by holding count on a log-scaled count axis, where the first few
# holdings, which remove most of the diversifiable risk, get room.
set title "@TITLE@\n@BASIS@"
set xlabel "holding count N (log scale; equal weights, drawn without replacement)"
set ylabel "portfolio standard deviation (% a year)"
set logscale x
set xrange [1:@XMAX@]
set xtics (@XTICS@)
set yrange [0:*]
set format y "%.0f%%"
floor = @FLOOR@
