package scenarios

import (
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"trackgate/harness/scenario"
)

// TestStockIsTheFolder: the embedded library is exactly the folder's YAML
// files, byte for byte, and every one of them loads.
func TestStockIsTheFolder(t *testing.T) {
	onDisk, err := filepath.Glob("*.yaml")
	if err != nil || len(onDisk) == 0 {
		t.Fatalf("no *.yaml files in the folder (err %v)", err)
	}
	embedded, err := fs.Glob(Stock, "*.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(onDisk, embedded) {
		t.Fatalf("embedded files %v, want the folder's %v", embedded, onDisk)
	}
	for _, name := range embedded {
		data, err := fs.ReadFile(Stock, name)
		if err != nil {
			t.Fatal(err)
		}
		disk, err := os.ReadFile(name)
		if err != nil {
			t.Fatal(err)
		}
		if string(data) != string(disk) {
			t.Errorf("%s: embedded copy differs from the file", name)
		}
		if _, err := scenario.Parse(name, data); err != nil {
			t.Errorf("%s: %v", name, err)
		}
	}
}
