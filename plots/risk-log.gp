# Risk by holding count on a log-scaled count axis, where the first few
# holdings, which remove most of the diversifiable risk, get room.  The
# margins, the y range and the key's place are set after this by holdcount.
set title "@TITLE@\n@SUBTITLE@"
set xlabel "holding count N (log scale; equal weights, drawn without replacement)"
set ylabel "portfolio standard deviation (% a year)"
set logscale x
set xrange [1:@XMAX@]
set xtics (@XTICS@)
set format y "%g%%"
floor = @FLOOR@
