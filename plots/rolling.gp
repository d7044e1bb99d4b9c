# The count each exact rule recommends, window by window: has the count
# needed changed?  The date ticks and the log-scaled count axis are set
# after this by holdcount, from the windows' span and the counts.
set title "@TITLE@\n@SUBTITLE@"
set xdata time
set timefmt "%Y-%m-%d"
set xlabel "last date of the window"
set ylabel "holding count the rule recommends (log scale)"
set datafile missing "-"
set key below horizontal maxrows 1 box
set bmargin 7
