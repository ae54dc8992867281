package recording

import "testing"

func TestGuessRole(t *testing.T) {
	// Channel labels as found in PhysioNet headers, EDF files and wearable
	// exports (common practice).
	cases := []struct {
		name, unit string
		want       Role
	}{
		{"MLII", "mV", RoleECG}, {"V5", "mV", RoleECG}, {"ECG", "", RoleECG}, {"ECG lead I", "uV", RoleECG},
		{"EKG", "mV", RoleECG}, {"II", "mV", RoleECG}, {"II", "%", RoleUnknown},
		{"Resp chest", "", RoleRibCage}, {"Resp abdomen", "", RoleAbdomen}, {"Thorax", "mV", RoleRibCage},
		{"RIP Thor", "", RoleRibCage}, {"Abdo", "", RoleAbdomen}, {"ABD", "", RoleAbdomen}, {"RC", "", RoleRibCage},
		{"acc_x", "m/s2", RoleAccX}, {"accY", "g", RoleAccY}, {"acc z", "g", RoleAccZ}, {"x_acc", "m/s2", RoleAccX},
		{"accel_z", "g", RoleAccZ}, {"ay", "g", RoleAccY}, {"SpO2", "%", RoleSpO2}, {"SaO2", "%", RoleSpO2},
		{"chest_acc_x", "g", RoleAccX}, {"Accel Z", "g", RoleAccZ}, {"y acc", "g", RoleAccY}, {"accelerometer_y", "g", RoleAccY},
		{"x", "m/s2", RoleAccX}, {"z", "g", RoleAccZ}, {"x", "cm", RoleUnknown},
		{"EEG Fpz-Cz", "uV", RoleUnknown}, {"temperature", "degC", RoleUnknown},
	}
	for _, c := range cases {
		if got := GuessRole(c.name, c.unit); got != c.want {
			t.Errorf("GuessRole(%q, %q) = %v, want %v", c.name, c.unit, got, c.want)
		}
	}
	for r := RoleUnknown; r <= RoleSpO2; r++ {
		b, _ := r.MarshalText()
		var back Role
		if err := back.UnmarshalText(b); err != nil || back != r {
			t.Errorf("role %v text round trip: %v %v", r, back, err)
		}
	}
}
