# The count each exact rule recommends, window by window: has the count
# needed changed?
set title "@TITLE@\n@SUBTITLE@"
set xdata time
set timefmt "%Y-%m-%d"
set format x "%Y"
set xlabel "last date of the window"
set ylabel "holding count the rule recommends (equal weights)"
set yrange [0:*]
set datafile missing "-"
set key below horizontal maxrows 1 box
set bmargin 7
