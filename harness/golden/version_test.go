package golden

import (
	"runtime/debug"
	"testing"
)

func TestVersionOf(t *testing.T) {
	tests := []struct {
		name string
		bi   debug.BuildInfo
		want string
	}{
		{"tagged module", debug.BuildInfo{Main: debug.Module{Version: "v1.4.2"}}, "v1.4.2"},
		{"local build without version control", debug.BuildInfo{Main: debug.Module{Version: "(devel)"}}, Release + "+devel"},
		{"local build at a commit", debug.BuildInfo{Main: debug.Module{Version: "(devel)"}, Settings: []debug.BuildSetting{
			{Key: "vcs.revision", Value: "0123456789abcdef0123"}, {Key: "vcs.modified", Value: "false"}}}, Release + "+0123456789ab"},
		{"local build with changes", debug.BuildInfo{Main: debug.Module{Version: "(devel)"}, Settings: []debug.BuildSetting{
			{Key: "vcs.revision", Value: "fedcba9876543210"}, {Key: "vcs.modified", Value: "true"}}}, Release + "+fedcba987654-dirty"},
		{"no main version at all", debug.BuildInfo{}, Release + "+devel"},
	}
	for _, tt := range tests {
		if got := versionOf(&tt.bi); got != tt.want {
			t.Errorf("%s: versionOf = %q, want %q", tt.name, got, tt.want)
		}
	}
}
