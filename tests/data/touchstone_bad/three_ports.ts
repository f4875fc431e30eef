[Version] 2.0
# Hz S RI R 50
[Number of Ports] 3
[Number of Frequencies] 1
[Network Data]
1e6 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0
[End]
