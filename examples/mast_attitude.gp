# Renders the mast attitude demo's CSV: roll, pitch and heading (truth and EKF), the attitude error of both
# filters with the EKF's 3-sigma heading band, and the magnetometer's NIS against the gate while the winch runs.
# Usage: gnuplot -e "csv='mast_attitude.csv'" -e "png='mast_attitude.png'" mast_attitude.gp
if (!exists("csv")) csv = 'mast_attitude.csv'
if (!exists("png")) png = 'mast_attitude.png'
set datafile separator ','
set terminal pngcairo size 1000,900 noenhanced
set output png
set multiplot layout 3,1 title 'survey boat mast: attitude on SO(3) from gyro, accelerometer and magnetometer (float)'
set key outside right
set xlabel 'time (s)'
set object 1 rect from 100, graph 0 to 115, graph 1 fc rgb '#ffe0e0' fs solid 0.5 noborder behind
set ylabel 'angle (deg)'
plot csv every ::1 using 1:4 with lines lw 2 lc rgb 'black' title 'heading, truth', \
     '' every ::1 using 1:7 with lines lc rgb '#1f77b4' title 'heading, EKF', \
     '' every ::1 using 1:2 with lines lc rgb '#999999' title 'roll, truth', \
     '' every ::1 using 1:5 with lines dt 2 lc rgb '#2ca02c' title 'roll, EKF', \
     '' every ::1 using 1:6 with lines dt 3 lc rgb '#9467bd' title 'pitch, EKF'
set ylabel 'error (deg)'
set yrange [0:3]
plot csv every ::1 using 1:10 with lines lc rgb '#1f77b4' title 'EKF attitude error', \
     '' every ::1 using 1:11 with lines dt 2 lc rgb '#d62728' title 'UKF attitude error', \
     '' every ::1 using 1:(3*$9) with lines lc rgb 'gray' title 'EKF 3 sigma heading'
set yrange [*:*]
set logscale y
set ylabel 'magnetometer NIS'
plot csv every ::1 using 1:($13==0 ? $12 : 1/0) with points pt 7 ps 0.3 lc rgb '#1f77b4' title 'accepted', \
     '' every ::1 using 1:($13==1 ? $12 : 1/0) with points pt 2 ps 0.6 lc rgb 'red' title 'gated', \
     16.27 with lines lc rgb 'black' title 'gate chi2(3) 0.999'
unset multiplot
