[Version] 2.0
# Hz S RI R 50
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 2
[Network Data]
1e6 0.1 0.2 0.5 -0.1 0.01 0.002 0.3 -0.2
2e6 0.11 0.19 0.49 -0.12 0.011 0.003 0.29
[End]
