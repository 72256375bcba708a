console.log("build placeholder")
