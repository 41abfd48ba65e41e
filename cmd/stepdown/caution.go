package main

// caution is printed with every result and written into every report.
const caution = "planning estimates, confirm by bit-true simulation of the RTL and the team's sign-off before committing hardware"
