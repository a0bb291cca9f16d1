package spin

// torqueName is the scenario name of TorqueLaw.
const torqueName = "torque"
