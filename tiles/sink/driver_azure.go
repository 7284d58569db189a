//go:build stipple_cloud || stipple_azure

package sink

import _ "gocloud.dev/blob/azureblob" // registers its bucket URL scheme
