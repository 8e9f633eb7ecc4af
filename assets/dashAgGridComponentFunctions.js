// Cell renderers for the dashboard's grids (dash-ag-grid looks them up by name on this object).
var dagcomponentfuncs = (window.dashAgGridComponentFunctions = window.dashAgGridComponentFunctions || {});

// A portfolio spot: its name, and under it the site file it came from.
dagcomponentfuncs.SpotWithFile = function (props) {
  var file = (props.data && props.data.file) || "";
  return React.createElement("div", {className: "sh-grid-spot"},
    React.createElement("div", {className: "sh-grid-spot-name"}, props.value),
    file ? React.createElement("div", {className: "sh-grid-spot-file"}, file) : null);
};
